using Campaign.Cli.Output;

namespace Campaign.Cli.Tests;

public class TextLayoutTests
{
    [Fact]
    public void A_long_line_is_broken_at_spaces_within_the_width_with_its_continuation_indented()
    {
        var line = string.Join(' ', Enumerable.Repeat("word", 40));
        var parts = WrappingWriter.Break(line, 30).ToList();
        Assert.All(parts, p => Assert.True(p.Length <= 30, p));
        Assert.All(parts.Skip(1), p => Assert.StartsWith("  word", p, StringComparison.Ordinal));
        Assert.Equal(line, string.Join(' ', parts.Select(p => p.Trim())));
    }

    [Fact]
    public void A_table_gives_way_in_its_text_columns_only_and_never_breaks_a_number()
    {
        var table = new TextTable("id", "cost", "note").Wrap("note");
        table.Add("sm-001-n.res1", "1,234,567", string.Join(' ', Enumerable.Repeat("a long reason", 20)));
        var writer = new StringWriter();
        table.WriteTo(writer);
        var lines = writer.ToString().Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.All(lines, l => Assert.True(l.Length <= Screen.Width, l));
        Assert.Contains("1,234,567", lines[2], StringComparison.Ordinal);
        Assert.True(lines.Length > 3); // the note wrapped
        Assert.Equal("id", lines[0].Split(' ', StringSplitOptions.RemoveEmptyEntries)[0]);
        Assert.Matches("^-+ -+ -+$", lines[1]);
    }

    [Fact]
    public void Every_column_needs_a_header() => Assert.Throws<ArgumentException>(() => new TextTable("id", ""));

    [Fact]
    public void Counts_agree_with_their_noun_and_cut_lists_say_how_many_more()
    {
        Assert.Equal("1 core", Format.Count(1, "core"));
        Assert.Equal("2 cores", Format.Count(2, "core"));
        Assert.Equal("a, b, ... and 3 more", Format.List(new[] { "a", "b", "c", "d", "e" }, 2));
        Assert.Equal("2,500,000", Format.Grouped(2_500_000));
        using (Format.PlainNumbers(true))
        {
            Assert.Equal("2500000", Format.Grouped(2_500_000));
        }
    }
}
