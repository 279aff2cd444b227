using System.Globalization;

namespace Campaign.Core.Lifecycle;

/// <summary>How tracked runs are named: one id per configuration and level; rehearsals carry their own suffix.</summary>
public static class RunIds
{
    /// <summary>The id of the real run of configuration <paramref name="configId"/> at <paramref name="level"/>.</summary>
    public static string For(string configId, int level) => configId + ".res" + level.ToString(CultureInfo.InvariantCulture);

    /// <summary>The id of rehearsal number <paramref name="number"/> of that run: never the real run's id.</summary>
    public static string Rehearsal(string configId, int level, int number) => For(configId, level) + ".r" + number.ToString(CultureInfo.InvariantCulture);
}
