using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;

namespace Campaign.Core.Text;

/// <summary>
/// Reads the subset of TOML 1.0 that Campaign's config files use: comments, [tables], [[arrays of tables]],
/// bare, quoted and dotted keys, basic and literal one-line strings, integers, floats (with inf and nan),
/// booleans, local dates and date-times, arrays (over several lines) and inline tables. Multi-line strings,
/// hexadecimal/octal/binary integers and times of day are not accepted (a clear error says so).
/// Every value keeps its line and column so that validation can point at it.
/// Errors throw <see cref="InvalidDataException"/> with "source:line:column: what was expected".
/// </summary>
public static partial class TomlDocument
{
    /// <summary>Parses TOML text; <paramref name="source"/> names the file in error messages.</summary>
    public static TomlTable Parse(string text, string source)
    {
        return new Reader(text, source).ReadDocument();
    }

    [GeneratedRegex(@"^[+-]?(0|[1-9](_?[0-9])*)\z")]
    private static partial Regex IntegerPattern();

    [GeneratedRegex(@"^[+-]?(0|[1-9](_?[0-9])*)((\.[0-9](_?[0-9])*)([eE][+-]?[0-9](_?[0-9])*)?|[eE][+-]?[0-9](_?[0-9])*)\z")]
    private static partial Regex FloatPattern();

    [GeneratedRegex(@"^[0-9]{4}-[0-9]{2}-[0-9]{2}([Tt][0-9]{2}:[0-9]{2}:[0-9]{2}(\.[0-9]+)?([Zz]|[+-][0-9]{2}:[0-9]{2})?)?\z")]
    private static partial Regex DatePattern();

    private sealed class Reader
    {
        private readonly string _text;
        private readonly string _source;
        private readonly HashSet<TomlTable> _defined = new();
        private readonly HashSet<TomlValue> _tableArrays = new();
        private int _pos;
        private int _line = 1;
        private int _column = 1;

        public Reader(string text, string source)
        {
            _text = text.Length > 0 && text[0] == '\uFEFF' ? text[1..] : text;
            _source = source;
        }

        public TomlTable ReadDocument()
        {
            var root = new TomlTable("", 1, 1);
            var current = root;
            while (true)
            {
                SkipBlankLines();
                if (AtEnd)
                {
                    return root;
                }

                if (Peek == '[')
                {
                    current = ReadHeader(root);
                }
                else
                {
                    ReadKeyValue(current);
                }

                ExpectEndOfLine();
            }
        }

        private bool AtEnd => _pos >= _text.Length;

        private char Peek => AtEnd ? '\0' : _text[_pos];

        private char PeekAt(int offset) => _pos + offset < _text.Length ? _text[_pos + offset] : '\0';

        private void Advance()
        {
            if (_text[_pos] == '\n')
            {
                _line++;
                _column = 1;
            }
            else
            {
                _column++;
            }

            _pos++;
        }

        private InvalidDataException Error(string message, int? line = null, int? column = null) =>
            new($"{_source}:{(line ?? _line).ToString(CultureInfo.InvariantCulture)}:{(column ?? _column).ToString(CultureInfo.InvariantCulture)}: {message}");

        private void SkipSpaces()
        {
            while (Peek is ' ' or '\t')
            {
                Advance();
            }
        }

        private void SkipComment()
        {
            if (Peek != '#')
            {
                return;
            }

            while (!AtEnd && Peek != '\n')
            {
                Advance();
            }
        }

        private void SkipBlankLines()
        {
            while (true)
            {
                SkipSpaces();
                SkipComment();
                if (Peek == '\r' && PeekAt(1) == '\n')
                {
                    Advance();
                }

                if (Peek == '\n')
                {
                    Advance();
                    continue;
                }

                return;
            }
        }

        private void SkipSpaceInArray()
        {
            while (true)
            {
                SkipSpaces();
                SkipComment();
                if (Peek is '\r' or '\n')
                {
                    Advance();
                    continue;
                }

                return;
            }
        }

        private void ExpectEndOfLine()
        {
            SkipSpaces();
            SkipComment();
            if (Peek == '\r' && PeekAt(1) == '\n')
            {
                Advance();
            }

            if (AtEnd)
            {
                return;
            }

            if (Peek != '\n')
            {
                throw Error($"unexpected '{Peek}': expected the end of the line");
            }

            Advance();
        }

        private TomlTable ReadHeader(TomlTable root)
        {
            var line = _line;
            var column = _column;
            Advance();
            var isArray = Peek == '[';
            if (isArray)
            {
                Advance();
            }

            SkipSpaces();
            var keys = ReadDottedKey();
            SkipSpaces();
            if (Peek != ']' || (isArray && PeekAt(1) != ']'))
            {
                throw Error(isArray ? "expected ']]' to close the table-array header" : "expected ']' to close the table header");
            }

            Advance();
            if (isArray)
            {
                Advance();
            }

            var parent = root;
            for (var i = 0; i < keys.Count - 1; i++)
            {
                parent = DescendOrCreate(parent, keys[i], line, column);
            }

            var last = keys[^1];
            var path = parent.NameOf(last);
            if (isArray)
            {
                if (!parent.TryGet(last, out var existing))
                {
                    existing = new TomlValue(TomlKind.Array, new List<TomlValue>(), "[[" + path + "]]", line, column);
                    parent.TryAdd(last, existing);
                    _tableArrays.Add(existing);
                }
                else if (!_tableArrays.Contains(existing))
                {
                    throw Error($"[[{path}]] redefines '{path}', first defined at line {existing.Line.ToString(CultureInfo.InvariantCulture)}", line, column);
                }

                var element = new TomlTable(path, line, column);
                ((List<TomlValue>)existing.Value).Add(new TomlValue(TomlKind.Table, element, "[[" + path + "]]", line, column));
                _defined.Add(element);
                return element;
            }

            if (parent.TryGet(last, out var found))
            {
                if (found.Kind != TomlKind.Table || !_defined.Add(found.Table))
                {
                    throw Error($"table [{path}] is defined more than once (first at line {found.Line.ToString(CultureInfo.InvariantCulture)})", line, column);
                }

                return found.Table;
            }

            var table = new TomlTable(path, line, column);
            parent.TryAdd(last, new TomlValue(TomlKind.Table, table, "[" + path + "]", line, column));
            _defined.Add(table);
            return table;
        }

        private TomlTable DescendOrCreate(TomlTable parent, string key, int line, int column)
        {
            if (!parent.TryGet(key, out var value))
            {
                var table = new TomlTable(parent.NameOf(key), line, column);
                parent.TryAdd(key, new TomlValue(TomlKind.Table, table, parent.NameOf(key), line, column));
                return table;
            }

            if (value.Kind == TomlKind.Table)
            {
                return value.Table;
            }

            if (_tableArrays.Contains(value))
            {
                return value.Items[^1].Table;
            }

            throw Error($"'{parent.NameOf(key)}' is a value (line {value.Line.ToString(CultureInfo.InvariantCulture)}), not a table", line, column);
        }

        private List<string> ReadDottedKey()
        {
            var keys = new List<string> { ReadKey() };
            SkipSpaces();
            while (Peek == '.')
            {
                Advance();
                SkipSpaces();
                keys.Add(ReadKey());
                SkipSpaces();
            }

            return keys;
        }

        private string ReadKey()
        {
            if (Peek == '"')
            {
                return ReadBasicString();
            }

            if (Peek == '\'')
            {
                return ReadLiteralString();
            }

            var start = _pos;
            while (char.IsAsciiLetterOrDigit(Peek) || Peek is '_' or '-')
            {
                Advance();
            }

            if (start == _pos)
            {
                throw Error(AtEnd || Peek is '\n' or '\r' ? "expected a key" : $"unexpected '{Peek}': expected a key (letters, digits, '_' or '-', or a quoted key)");
            }

            return _text[start.._pos];
        }

        private void ReadKeyValue(TomlTable table)
        {
            var line = _line;
            var column = _column;
            var keys = ReadDottedKey();
            SkipSpaces();
            if (Peek != '=')
            {
                throw Error($"expected '=' after the key '{string.Join('.', keys)}'");
            }

            Advance();
            SkipSpaces();
            var value = ReadValue();
            var target = table;
            for (var i = 0; i < keys.Count - 1; i++)
            {
                target = DescendOrCreate(target, keys[i], line, column);
            }

            if (!target.TryAdd(keys[^1], value))
            {
                target.TryGet(keys[^1], out var first);
                throw Error($"duplicate key '{target.NameOf(keys[^1])}' (first at line {first.Line.ToString(CultureInfo.InvariantCulture)})", line, column);
            }
        }

        private TomlValue ReadValue()
        {
            var line = _line;
            var column = _column;
            var start = _pos;
            switch (Peek)
            {
                case '"':
                    if (PeekAt(1) == '"' && PeekAt(2) == '"')
                    {
                        throw Error("multi-line strings are not supported here: write the string on one line");
                    }

                    var basic = ReadBasicString();
                    return new TomlValue(TomlKind.String, basic, _text[start.._pos], line, column);
                case '\'':
                    if (PeekAt(1) == '\'' && PeekAt(2) == '\'')
                    {
                        throw Error("multi-line strings are not supported here: write the string on one line");
                    }

                    var literal = ReadLiteralString();
                    return new TomlValue(TomlKind.String, literal, _text[start.._pos], line, column);
                case '[':
                    return ReadArray(line, column, start);
                case '{':
                    return ReadInlineTable(line, column, start);
                case '\0':
                case '\n':
                case '\r':
                case '#':
                    throw Error("expected a value after '='");
            }

            while (!AtEnd && Peek is not (' ' or '\t' or ',' or ']' or '}' or '#' or '\n' or '\r'))
            {
                Advance();
            }

            var token = _text[start.._pos];
            return Scalar(token, line, column);
        }

        private TomlValue Scalar(string token, int line, int column)
        {
            switch (token)
            {
                case "true":
                    return new TomlValue(TomlKind.Boolean, true, token, line, column);
                case "false":
                    return new TomlValue(TomlKind.Boolean, false, token, line, column);
                case "inf" or "+inf":
                    return new TomlValue(TomlKind.Float, double.PositiveInfinity, token, line, column);
                case "-inf":
                    return new TomlValue(TomlKind.Float, double.NegativeInfinity, token, line, column);
                case "nan" or "+nan" or "-nan":
                    return new TomlValue(TomlKind.Float, double.NaN, token, line, column);
            }

            var plain = token.Replace("_", string.Empty, StringComparison.Ordinal);
            if (IntegerPattern().IsMatch(token))
            {
                if (!long.TryParse(plain, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out var integer))
                {
                    throw Error($"integer {token} does not fit in 64 bits", line, column);
                }

                return new TomlValue(TomlKind.Integer, integer, token, line, column);
            }

            if (FloatPattern().IsMatch(token))
            {
                var number = double.Parse(plain, NumberStyles.Float, CultureInfo.InvariantCulture);
                return new TomlValue(TomlKind.Float, number, token, line, column);
            }

            if (DatePattern().IsMatch(token))
            {
                if (!DateTime.TryParse(token, CultureInfo.InvariantCulture, DateTimeStyles.AdjustToUniversal | DateTimeStyles.AssumeUniversal, out var date))
                {
                    throw Error($"'{token}' is not a valid date", line, column);
                }

                return new TomlValue(TomlKind.DateTime, date, token, line, column);
            }

            throw Error($"'{token}' is not a value: expected a quoted string, a number, true, false, a date (YYYY-MM-DD), an array or an inline table", line, column);
        }

        /// <summary>Deepest nesting of arrays and inline tables read (no config needs more; deeper text would exhaust the stack).</summary>
        private const int MaxDepth = 64;

        private int _depth;

        private TomlValue ReadArray(int line, int column, int start) => Nested(line, column, () => ReadArrayItems(line, column, start));

        /// <summary>Reads one nested value (an array or an inline table), refusing nesting deeper than <see cref="MaxDepth"/>.</summary>
        private TomlValue Nested(int line, int column, Func<TomlValue> read)
        {
            if (++_depth > MaxDepth)
            {
                throw Error($"arrays and inline tables nested more than {MaxDepth} deep: expected a flat value such as [1, 2, 3]", line, column);
            }

            try
            {
                return read();
            }
            finally
            {
                _depth--;
            }
        }

        private TomlValue ReadArrayItems(int line, int column, int start)
        {
            Advance();
            var items = new List<TomlValue>();
            while (true)
            {
                SkipSpaceInArray();
                if (AtEnd)
                {
                    throw Error("the array is not closed: expected ']'", line, column);
                }

                if (Peek == ']')
                {
                    Advance();
                    return new TomlValue(TomlKind.Array, items, _text[start.._pos], line, column);
                }

                items.Add(ReadValue());
                SkipSpaceInArray();
                if (Peek == ',')
                {
                    Advance();
                }
                else if (Peek != ']')
                {
                    throw AtEnd ? Error("the array is not closed: expected ']'", line, column) : Error($"unexpected '{Peek}' in an array: expected ',' or ']'");
                }
            }
        }

        private TomlValue ReadInlineTable(int line, int column, int start) => Nested(line, column, () => ReadInlineTableItems(line, column, start));

        private TomlValue ReadInlineTableItems(int line, int column, int start)
        {
            Advance();
            var table = new TomlTable("{inline}", line, column);
            SkipSpaces();
            if (Peek == '}')
            {
                Advance();
                return new TomlValue(TomlKind.Table, table, _text[start.._pos], line, column);
            }

            while (true)
            {
                SkipSpaces();
                ReadKeyValue(table);
                SkipSpaces();
                if (Peek == ',')
                {
                    Advance();
                    continue;
                }

                if (Peek == '}')
                {
                    Advance();
                    return new TomlValue(TomlKind.Table, table, _text[start.._pos], line, column);
                }

                throw Error(AtEnd || Peek is '\n' or '\r' ? "the inline table is not closed on its line: expected '}'" : $"unexpected '{Peek}' in an inline table: expected ',' or '}}'");
            }
        }

        private string ReadBasicString()
        {
            var line = _line;
            var column = _column;
            Advance();
            var builder = new StringBuilder();
            while (true)
            {
                if (AtEnd || Peek is '\n' or '\r')
                {
                    throw Error("the string is not closed on its line: expected '\"'", line, column);
                }

                var c = Peek;
                Advance();
                if (c == '"')
                {
                    return builder.ToString();
                }

                if (c != '\\')
                {
                    if (char.IsControl(c) && c != '\t')
                    {
                        throw Error($"control character U+{(int)c:X4} in a string: expected printable text");
                    }

                    builder.Append(c);
                    continue;
                }

                var escape = Peek;
                if (AtEnd)
                {
                    throw Error("the string is not closed on its line: expected '\"'", line, column);
                }

                Advance();
                switch (escape)
                {
                    case '"': builder.Append('"'); break;
                    case '\\': builder.Append('\\'); break;
                    case 'n': builder.Append('\n'); break;
                    case 't': builder.Append('\t'); break;
                    case 'r': builder.Append('\r'); break;
                    case 'b': builder.Append('\b'); break;
                    case 'f': builder.Append('\f'); break;
                    case 'u':
                    case 'U':
                        var digits = escape == 'u' ? 4 : 8;
                        if (_pos + digits > _text.Length || !int.TryParse(_text.AsSpan(_pos, digits), NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture, out var code) || code > 0x10FFFF || (code >= 0xD800 && code <= 0xDFFF))
                        {
                            throw Error($"bad unicode escape: expected \\{escape} followed by {digits.ToString(CultureInfo.InvariantCulture)} hexadecimal digits of a scalar value");
                        }

                        for (var i = 0; i < digits; i++)
                        {
                            Advance();
                        }

                        builder.Append(char.ConvertFromUtf32(code));
                        break;
                    default:
                        throw Error($"unknown escape '\\{escape}' in a string: expected one of \\\" \\\\ \\n \\t \\r \\b \\f \\uXXXX");
                }
            }
        }

        private string ReadLiteralString()
        {
            var line = _line;
            var column = _column;
            Advance();
            var start = _pos;
            while (Peek != '\'')
            {
                if (AtEnd || Peek is '\n' or '\r')
                {
                    throw Error("the string is not closed on its line: expected \"'\"", line, column);
                }

                Advance();
            }

            var value = _text[start.._pos];
            Advance();
            return value;
        }
    }
}
