using Campaign.Core.Text;

namespace Campaign.Core.Tests.Text;

public class TomlDocumentTests
{
    [Fact]
    public void Reads_tables_arrays_of_tables_and_every_value_kind_with_locations()
    {
        const string text = """
            # comment
            title = "a \"quoted\" name"   # trailing comment
            literal = 'C:\path'
            [owner]
            count = 1_000
            ratio = -2.5e-3
            flag = true
            when = 2027-01-01
            list = [
              1, 2,   # comment inside
              3,
            ]
            inline = { a = 1, b = "x" }
            [[item]]
            name = "first"
            [[item.part]]
            size = 1
            [[item]]
            name = "second"
            dotted.key = inf
            """;
        var root = TomlDocument.Parse(text, "f.toml");
        Assert.True(root.TryGet("title", out var title));
        Assert.Equal("a \"quoted\" name", title.Value);
        Assert.Equal((2, 9), (title.Line, title.Column));
        root.TryGet("literal", out var literal);
        Assert.Equal(@"C:\path", literal.Value);
        root.TryGet("owner", out var owner);
        var o = owner.Table;
        o.TryGet("count", out var count);
        Assert.Equal(1000L, count.Value);
        o.TryGet("ratio", out var ratio);
        Assert.Equal(-2.5e-3, ratio.Value);
        o.TryGet("flag", out var flag);
        Assert.Equal(true, flag.Value);
        o.TryGet("when", out var when);
        Assert.Equal(new DateTime(2027, 1, 1), when.Value);
        o.TryGet("list", out var list);
        Assert.Equal(new object[] { 1L, 2L, 3L }, list.Items.Select(i => i.Value));
        o.TryGet("inline", out var inline);
        inline.Table.TryGet("b", out var b);
        Assert.Equal("x", b.Value);
        root.TryGet("item", out var items);
        Assert.Equal(2, items.Items.Count);
        items.Items[0].Table.TryGet("part", out var parts);
        Assert.Single(parts.Items);
        items.Items[1].Table.TryGet("dotted", out var dotted);
        dotted.Table.TryGet("key", out var key);
        Assert.Equal(double.PositiveInfinity, key.Value);
        Assert.Equal(20, key.Line);
    }

    [Theory]
    [InlineData("a = 1\na = 2", "f.toml:2:1: duplicate key 'a' (first at line 1)")]
    [InlineData("a = ", "f.toml:1:5: expected a value after '='")]
    [InlineData("a = 12x", "f.toml:1:5: '12x' is not a value: expected a quoted string, a number, true, false, a date (YYYY-MM-DD), an array or an inline table")]
    [InlineData("a = \"open", "f.toml:1:5: the string is not closed on its line: expected '\"'")]
    [InlineData("[t]\nx = 1\n[t]", "f.toml:3:1: table [t] is defined more than once (first at line 1)")]
    [InlineData("a = [1, 2", "f.toml:1:5: the array is not closed: expected ']'")]
    [InlineData("a = 1 b = 2", "f.toml:1:7: unexpected 'b': expected the end of the line")]
    [InlineData("a = \"\"\"x\"\"\"", "f.toml:1:5: multi-line strings are not supported here: write the string on one line")]
    [InlineData("a = 99999999999999999999", "f.toml:1:5: integer 99999999999999999999 does not fit in 64 bits")]
    [InlineData("= 3", "f.toml:1:1: unexpected '=': expected a key (letters, digits, '_' or '-', or a quoted key)")]
    [InlineData("a = 2027-13-01", "f.toml:1:5: '2027-13-01' is not a valid date")]
    public void Malformed_text_names_file_line_column_and_what_was_expected(string text, string message)
    {
        var error = Assert.Throws<InvalidDataException>(() => TomlDocument.Parse(text, "f.toml"));
        Assert.Equal(message, error.Message);
    }

    [Fact]
    public void A_byte_order_mark_and_CRLF_line_ends_are_accepted()
    {
        var root = TomlDocument.Parse("\uFEFFa = 1\r\nb = \"x\"\r\n", "f.toml");
        Assert.True(root.Contains("a") && root.Contains("b"));
    }

    [Theory]
    [InlineData("[", "]")]
    [InlineData("{ a = ", " }")]
    public void Values_nested_twenty_thousand_deep_are_refused_with_their_location_instead_of_exhausting_the_stack(string open, string close)
    {
        // Regression (faults issue, item 14): levels nested 20,000 deep ended every command in "Stack overflow".
        var text = "[defaults]\nlevels = " + string.Concat(Enumerable.Repeat(open, 20_000)) + "1" + string.Concat(Enumerable.Repeat(close, 20_000)) + "\n";
        var error = Assert.Throws<InvalidDataException>(() => TomlDocument.Parse(text, "campaign.toml"));
        Assert.StartsWith("campaign.toml:2:", error.Message, StringComparison.Ordinal);
        Assert.Contains("nested more than 64 deep", error.Message, StringComparison.Ordinal);
    }
}
