using System.Globalization;
using System.Text;
using CalBudget.Data.Calibrations;

namespace CalBudget.Api.Calibrations;

/// <summary>An upload of readings refused: which field, where (line of the file or index of the JSON array), and why.</summary>
/// <param name="field">The problem's field name: "line 12: frequencyHz", "readings[3].timestamp", "body".</param>
/// <param name="message">What is wrong, in the contract's terms.</param>
/// <param name="line">The line (CSV, counting the header as 1) or null.</param>
/// <param name="notComputable">True for well-formed readings that cannot be used (order, duplicates): 422 rather than 400.</param>
public sealed class ReadingsFormatException(string field, string message, int? line = null, bool notComputable = false) : Exception(message)
{
    /// <summary>The field named in the problem's errors.</summary>
    public string Field { get; } = field;

    /// <summary>The CSV line, when there is one.</summary>
    public int? Line { get; } = line;

    /// <summary>422 rather than 400.</summary>
    public bool NotComputable { get; } = notComputable;
}

/// <summary>
/// The rules every reading meets, whatever the format: a finite frequency &gt; 0 (turned into a fractional offset with the
/// instrument's nominal frequency) or a finite fractional offset &gt; -1, a gate time &gt; 0 when given, and timestamps strictly
/// increasing (a repeat is a duplicate, an earlier one out of order: both 422).
/// </summary>
public sealed class ReadingRules(double nominalFrequencyHz)
{
    private readonly decimal? _nominal = nominalFrequencyHz is > 0 and < 1e15 ? (decimal)nominalFrequencyHz : null;

    private long? _lastTicks;
    private string? _lastWhere;

    /// <summary>
    /// y = (f - f0) / f0 from the decimal text of f, exactly rounded: with f = M x 10^-k read as integers, f - f0 is the exact
    /// integer M - f0 x 10^k, and one division of two exactly represented integers rounds once. Texts beyond that range
    /// go through decimal arithmetic; null when the text is not a plain decimal number.
    /// </summary>
    // Hot for a million-reading upload: compiled optimised at once rather than after tiering has caught up.
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    public double? ExactOffset(ReadOnlySpan<byte> text)
    {
        const long Exact = 1L << 53;
        int i = 0;
        bool negative = text.Length > 0 && text[0] == (byte)'-';
        if (text.Length > 0 && text[0] is (byte)'-' or (byte)'+')
        {
            i++;
        }

        long mantissa = 0;
        int digits = 0;
        int fraction = -1;
        for (; i < text.Length; i++)
        {
            byte c = text[i];
            if (c == (byte)'.' && fraction < 0)
            {
                fraction = 0;
                continue;
            }

            if (c is < (byte)'0' or > (byte)'9' || ++digits > 17)
            {
                return Slow(text);
            }

            mantissa = mantissa * 10 + (c - '0');
            if (fraction >= 0)
            {
                fraction++;
            }
        }

        int scale = Math.Max(fraction, 0);
        if (digits == 0 || _nominal is null || scale > 15 || Math.Floor(nominalFrequencyHz) != nominalFrequencyHz)
        {
            return Slow(text);
        }

        double scaledNominal = nominalFrequencyHz * Pow10[scale];
        if (scaledNominal >= Exact || mantissa >= Exact)
        {
            return Slow(text);
        }

        long difference = (negative ? -mantissa : mantissa) - (long)scaledNominal;
        return difference / scaledNominal;
    }

    private static readonly double[] Pow10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15];

    private double? Slow(ReadOnlySpan<byte> text) =>
        _nominal is decimal f0 && decimal.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out decimal f) ? (double)((f - f0) / f0) : null;

    /// <summary>
    /// A checked reading. <paramref name="where"/> prefixes field names ("line 12: ", "readings[3]."). When the file's decimal text
    /// of a frequency is at hand (<paramref name="exact"/>), y = (f - f0) / f0 is taken in decimal arithmetic, so that
    /// 10000000.000023 Hz gives 2.3e-12 rather than the 2.29999e-12 that the binary double nearest to it would.
    /// </summary>
    // Hot for a million-reading upload: compiled optimised at once rather than after tiering has caught up.
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    public Reading Make(string where, int? line, DateTimeOffset timestamp, string quantity, double value, double? gateTimeSeconds, double? exact = null)
    {
        double y;
        double? f = null;
        if (quantity == ReadingQuantities.FrequencyHz)
        {
            if (!double.IsFinite(value) || value <= 0)
            {
                throw new ReadingsFormatException(where + quantity, "A frequency is a finite number of hertz > 0.", line);
            }

            f = value;
            y = exact ?? (value - nominalFrequencyHz) / nominalFrequencyHz;
        }
        else
        {
            if (!double.IsFinite(value) || value <= -1)
            {
                throw new ReadingsFormatException(where + quantity, "A fractional frequency offset is a finite number > -1 (dimensionless, 1e-9 rather than 1 ppb).", line);
            }

            y = value;
        }

        if (gateTimeSeconds is double g && (!double.IsFinite(g) || g <= 0))
        {
            throw new ReadingsFormatException(where + "gateTimeSeconds", "A gate time is a finite number of seconds > 0.", line);
        }

        long ticks = ReadingTime.ToTicks(timestamp);
        if (_lastTicks is long last && ticks <= last)
        {
            throw new ReadingsFormatException(where + "timestamp", ticks == last
                ? $"Duplicate timestamp: {where.TrimEnd(' ', ':', '.')} repeats the time of {_lastWhere}."
                : $"Out of order: {where.TrimEnd(' ', ':', '.')} is earlier than {_lastWhere}; readings are in time order.", line, notComputable: true);
        }

        _lastTicks = ticks;
        _lastWhere = where.TrimEnd(' ', ':', '.');
        return new Reading(ticks, y, f, gateTimeSeconds);
    }
}

/// <summary>
/// The CSV form of readings, read a line at a time. A header row names the columns (any order, case ignored):
/// <c>timestamp</c> (RFC 3339), exactly one of <c>frequencyHz</c> or <c>fractionalOffset</c>, and optionally
/// <c>gateTimeSeconds</c> (blank: the run's). Fields are separated by commas and may be double-quoted; blank lines are skipped;
/// a UTF-8 byte order mark is allowed.
/// </summary>
public sealed class ReadingsCsvParser(ReadingRules rules)
{
    /// <summary>The media type.</summary>
    public const string MediaType = "text/csv";

    /// <summary>The longest line accepted.</summary>
    public const int MaxLineBytes = 4096;

    private int _timestamp = -1;
    private int _value = -1;
    private int _gate = -1;
    private int _columns;

    /// <summary>What the file gives, once the header has been read; null before.</summary>
    public string? Quantity { get; private set; }

    /// <summary>Reads one line (without its line feed). True with a reading for a data line; false for the header or a blank line.</summary>
    // Hot for a million-reading upload: compiled optimised at once rather than after tiering has caught up.
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    public bool TryRead(ReadOnlySpan<byte> line, int lineNumber, out Reading reading)
    {
        reading = default;
        if (line.Length > 0 && line[^1] == (byte)'\r')
        {
            line = line[..^1];
        }

        if (lineNumber == 1 && line.StartsWith("\uFEFF"u8))
        {
            line = line[3..];
        }

        if (line.Trim((byte)' ').IsEmpty)
        {
            return false;
        }

        if (Quantity is null)
        {
            ReadHeader(line, lineNumber);
            return false;
        }

        string where = $"line {lineNumber}: ";
        Span<Range> cells = stackalloc Range[_columns + 1];
        int n = Split(line, cells);
        if (n != _columns)
        {
            throw new ReadingsFormatException(where.TrimEnd(' ', ':'), $"Expected {_columns} fields as in the header, found {(n > _columns ? "more" : n.ToString(CultureInfo.InvariantCulture))}.", lineNumber);
        }

        var timestampText = Cell(line, cells[_timestamp]);
        if (!Rfc3339.TryParse(timestampText, out var timestamp))
        {
            throw new ReadingsFormatException(where + "timestamp", $"Not an RFC 3339 time with its offset: '{Show(timestampText)}'.", lineNumber);
        }

        var valueText = Cell(line, cells[_value]);
        if (!TryNumber(valueText, out double value))
        {
            throw new ReadingsFormatException(where + Quantity, $"Not a number: '{Show(valueText)}'.", lineNumber);
        }

        double? exact = Quantity == ReadingQuantities.FrequencyHz ? rules.ExactOffset(valueText) : null;

        double? gate = null;
        if (_gate >= 0)
        {
            var gateText = Cell(line, cells[_gate]);
            if (!gateText.IsEmpty)
            {
                if (!TryNumber(gateText, out double g))
                {
                    throw new ReadingsFormatException(where + "gateTimeSeconds", $"Not a number: '{Show(gateText)}'.", lineNumber);
                }

                gate = g;
            }
        }

        reading = rules.Make(where, lineNumber, timestamp, Quantity, value, gate, exact);
        return true;
    }

    private void ReadHeader(ReadOnlySpan<byte> line, int lineNumber)
    {
        const string where = "line 1: header";
        Span<Range> cells = stackalloc Range[9];
        int n = Split(line, cells);
        if (n > 8)
        {
            throw new ReadingsFormatException(where, "The header names timestamp, frequencyHz or fractionalOffset, and optionally gateTimeSeconds.", lineNumber);
        }

        string? quantity = null;
        for (int i = 0; i < n; i++)
        {
            string name = Encoding.UTF8.GetString(Cell(line, cells[i]));
            switch (name.ToLowerInvariant())
            {
                case "timestamp" when _timestamp < 0:
                    _timestamp = i;
                    break;
                case "frequencyhz" when _value < 0:
                    _value = i;
                    quantity = ReadingQuantities.FrequencyHz;
                    break;
                case "fractionaloffset" when _value < 0:
                    _value = i;
                    quantity = ReadingQuantities.FractionalOffset;
                    break;
                case "gatetimeseconds" when _gate < 0:
                    _gate = i;
                    break;
                case "timestamp" or "frequencyhz" or "fractionaloffset" or "gatetimeseconds":
                    throw new ReadingsFormatException(where, $"Column '{name}' conflicts with an earlier one: give the time once and one of frequencyHz or fractionalOffset.", lineNumber);
                default:
                    throw new ReadingsFormatException(where, $"Unknown column '{Show(Encoding.UTF8.GetBytes(name))}': the columns are timestamp, frequencyHz or fractionalOffset, and gateTimeSeconds.", lineNumber);
            }
        }

        if (_timestamp < 0)
        {
            throw new ReadingsFormatException("timestamp", "Missing column: the header names no timestamp column.", lineNumber);
        }

        if (quantity is null)
        {
            throw new ReadingsFormatException("frequencyHz", "Missing column: the header names neither frequencyHz nor fractionalOffset.", lineNumber);
        }

        _columns = n;
        Quantity = quantity;
    }

    // Fills cells with the comma-separated fields; stops when cells is full (so a count of cells.Length means "that many or more").
    private static int Split(ReadOnlySpan<byte> line, Span<Range> cells)
    {
        int n = 0;
        int start = 0;
        while (n < cells.Length)
        {
            int comma = line[start..].IndexOf((byte)',');
            if (comma < 0)
            {
                cells[n++] = new Range(start, line.Length);
                break;
            }

            cells[n++] = new Range(start, start + comma);
            start += comma + 1;
        }

        return n;
    }

    private static ReadOnlySpan<byte> Cell(ReadOnlySpan<byte> line, Range range)
    {
        var cell = line[range].Trim((byte)' ');
        return cell.Length >= 2 && cell[0] == (byte)'"' && cell[^1] == (byte)'"' ? cell[1..^1] : cell;
    }

    private static bool TryNumber(ReadOnlySpan<byte> text, out double value) =>
        double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out value);

    private static string Show(ReadOnlySpan<byte> text)
    {
        string s = Encoding.UTF8.GetString(text.Length > 40 ? text[..40] : text);
        return new string(s.Select(c => char.IsControl(c) ? '?' : c).ToArray());
    }
}

/// <summary>A strict RFC 3339 date-time reader: <c>YYYY-MM-DDTHH:MM:SS[.fraction](Z|+HH:MM|-HH:MM)</c>, to 100 ns.</summary>
public static class Rfc3339
{
    /// <summary>Reads <paramref name="text"/>; false when it is not an RFC 3339 date-time.</summary>
    // Hot for a million-reading upload: compiled optimised at once rather than after tiering has caught up.
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    public static bool TryParse(ReadOnlySpan<byte> text, out DateTimeOffset value)
    {
        value = default;
        if (text.Length < 20 || text[4] != '-' || text[7] != '-' || (text[10] | 0x20) != 't' && text[10] != ' ' || text[13] != ':' || text[16] != ':')
        {
            return false;
        }

        if (!Digits(text, 0, 4, out int year) || !Digits(text, 5, 2, out int month) || !Digits(text, 8, 2, out int day)
            || !Digits(text, 11, 2, out int hour) || !Digits(text, 14, 2, out int minute) || !Digits(text, 17, 2, out int second))
        {
            return false;
        }

        if (year < 1 || month is < 1 or > 12 || day < 1 || day > DateTime.DaysInMonth(year, month) || hour > 23 || minute > 59 || second > 59)
        {
            return false;
        }

        int at = 19;
        long fraction = 0;
        if (text[at] == '.')
        {
            at++;
            int start = at;
            long scale = TimeSpan.TicksPerSecond;
            while (at < text.Length && text[at] is >= (byte)'0' and <= (byte)'9')
            {
                scale /= 10;
                fraction += (text[at] - '0') * scale;
                at++;
            }

            if (at == start)
            {
                return false;
            }
        }

        TimeSpan offset;
        if (at == text.Length - 1 && (text[at] | 0x20) == 'z')
        {
            offset = TimeSpan.Zero;
        }
        else if (at == text.Length - 6 && text[at] is (byte)'+' or (byte)'-' && text[at + 3] == ':'
                 && Digits(text, at + 1, 2, out int oh) && Digits(text, at + 4, 2, out int om) && oh <= 23 && om <= 59)
        {
            offset = new TimeSpan(oh, om, 0) * (text[at] == '-' ? -1 : 1);
        }
        else
        {
            return false;
        }

        var local = new DateTime(year, month, day, hour, minute, second, DateTimeKind.Unspecified).AddTicks(fraction);
        long utc = local.Ticks - offset.Ticks;
        if (utc < DateTime.MinValue.Ticks || utc > DateTime.MaxValue.Ticks)
        {
            return false;
        }

        value = new DateTimeOffset(utc, TimeSpan.Zero);
        return true;
    }

    private static bool Digits(ReadOnlySpan<byte> text, int at, int count, out int value)
    {
        value = 0;
        for (int i = at; i < at + count; i++)
        {
            int d = text[i] - '0';
            if ((uint)d > 9)
            {
                return false;
            }

            value = value * 10 + d;
        }

        return true;
    }
}
