using Campaign.Core.Text;

namespace Campaign.Core.Tests.Text;

public class CsvTableTests
{
    [Fact]
    public void Reads_quoted_cells_comments_CRLF_and_a_byte_order_mark()
    {
        var table = CsvTable.Parse("\uFEFF# comment\r\nid,note\r\n a ,\"x, \"\"y\"\"\"\r\n\r\nb,\"two\nlines\"\r\nc,z\r\n", "f.csv");
        Assert.Equal(new[] { "id", "note" }, table.Header);
        Assert.Equal(3, table.Rows.Count);
        Assert.Equal(new[] { "a", "x, \"y\"" }, table.Rows[0].Cells);
        Assert.Equal(3, table.Rows[0].Line);
        Assert.Equal("two\nlines", table.Rows[1].Cells[1]);
        Assert.Equal(5, table.Rows[1].Line);
        Assert.Equal(7, table.Rows[2].Line);
    }

    [Theory]
    [InlineData("", "f.csv:1:1: the file is empty: expected a header line of column names")]
    [InlineData("a,b\n1,2,3\n", "f.csv:2:1: 3 cells: expected 2, one per header column (a, b)")]
    [InlineData("a,a\n", "f.csv:1:2: column 'a' appears twice in the header: expected each column once")]
    [InlineData("a,b\n\"1,2\n", "f.csv:2:1: a quoted cell is not closed: expected a closing '\"'")]
    [InlineData("a,b\n1,x\"y\n", "f.csv:2: a quote inside an unquoted cell: expected the whole cell in quotes, with quotes doubled")]
    [InlineData("a\n\uFFFD\n", "f.csv:2:1: bytes that are not valid UTF-8: expected UTF-8 text")]
    public void Malformed_files_are_located(string text, string message)
    {
        var error = Assert.Throws<InvalidDataException>(() => CsvTable.Parse(text, "f.csv"));
        Assert.Equal(message, error.Message);
    }
}
