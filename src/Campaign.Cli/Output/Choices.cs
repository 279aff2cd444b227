using System.CommandLine;

namespace Campaign.Cli.Output;

/// <summary>Options that take one of a few words; a wrong word is refused naming the option, the value and the choices.</summary>
internal static class Choices
{
    /// <summary>Restricts a string option (required or not) to <paramref name="values"/>.</summary>
    public static void Restrict(Option option, params string[] values)
    {
        option.CompletionSources.Add(values);
        option.Validators.Add(result =>
        {
            var value = result.GetValueOrDefault<string?>();
            if (value is not null && !values.Contains(value, StringComparer.Ordinal))
            {
                result.AddError($"{option.Name} = '{value}': expected one of {string.Join(", ", values)}");
            }
        });
    }
}
