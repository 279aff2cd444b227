using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Campaign.Core.Text;

namespace Campaign.Core.Tests.Text;

public class AmountTests
{
    [Theory]
    [InlineData("2500000", 2_500_000)]
    [InlineData("2,500,000", 2_500_000)]
    [InlineData("2_500_000", 2_500_000)]
    [InlineData("2.5e6", 2_500_000)]
    [InlineData("2.5M", 2_500_000)]
    [InlineData("250k", 250_000)]
    [InlineData("250K", 250_000)]
    [InlineData(" 1.2G ", 1_200_000_000)]
    [InlineData("12,000,000.5", 12_000_000.5)]
    public void Amounts_are_read_as_people_write_them(string text, double expected)
    {
        Assert.True(Amount.TryParse(text, out var value), text);
        Assert.Equal(expected, value, 6);
    }

    [Theory]
    [InlineData("2,50")]
    [InlineData("2.5Q")]
    [InlineData("-3")]
    [InlineData("NaN")]
    [InlineData("1e999")]
    [InlineData("")]
    [InlineData("2,500,00")]
    [InlineData("_25")]
    [InlineData("2.5 M M")]
    public void Anything_else_is_not_an_amount(string text) => Assert.False(Amount.TryParse(text, out _), text);

    [Fact]
    public void An_allocation_may_be_written_as_a_string_and_a_bad_one_is_named_with_its_place()
    {
        var good = new TomlFields(TomlFields.Parse("amount = \"2.5M\"\n", "c.toml"), "c.toml", new List<string>());
        Assert.Equal(2_500_000, good.Amount("amount", true, 1e12));

        var problems = new List<string>();
        var bad = new TomlFields(TomlFields.Parse("amount = \"lots\"\n", "c.toml"), "c.toml", problems);
        Assert.Null(bad.Amount("amount", true, 1e12));
        Assert.Equal("c.toml:1:10: amount = \"lots\": expected a number greater than 0 and at most 1000000000000, or a string with " + Amount.Expected, Assert.Single(problems));
    }
}
