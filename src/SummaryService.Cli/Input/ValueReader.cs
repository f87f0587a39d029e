using System.Globalization;
using System.Text.Json;
using SummaryService.Cli.Parsing;

namespace SummaryService.Cli.Input;

/// <summary>
/// Reads measurements from text, refusing a bad line with its number and content rather than skipping
/// it, so what is sent is exactly what the file says. Finite-ness is left to the server, which names
/// the offending value and index.
/// </summary>
public static class ValueReader
{
    /// <summary>The format a file name implies (.csv, .ndjson/.jsonl, otherwise plain numbers).</summary>
    public static ValueFormat FormatOf(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        string extension = Path.GetExtension(path).ToLowerInvariant();
        return extension switch
        {
            ".csv" => ValueFormat.Csv,
            ".ndjson" or ".jsonl" => ValueFormat.Ndjson,
            _ => ValueFormat.Plain,
        };
    }

    /// <summary>Every value in <paramref name="reader"/>; <paramref name="source"/> names it in errors.</summary>
    public static List<TimedValue> Read(TextReader reader, ValueFormat format, string source)
    {
        ArgumentNullException.ThrowIfNull(reader);
        var values = new List<TimedValue>();
        int lineNumber = 0;
        int timeColumn = 1;
        int valueColumn = 0;
        bool headerSeen = false;
        for (string? line = reader.ReadLine(); line is not null; line = reader.ReadLine())
        {
            lineNumber++;
            string trimmed = line.Trim();
            if (trimmed.Length == 0 || trimmed.StartsWith('#'))
            {
                continue;
            }

            switch (format)
            {
                case ValueFormat.Plain:
                    foreach (string token in trimmed.Split((char[]?)null, StringSplitOptions.RemoveEmptyEntries))
                    {
                        values.Add(new TimedValue(Number(token, source, lineNumber), 0));
                    }

                    break;
                case ValueFormat.Csv:
                    string[] cells = trimmed.Split(',', StringSplitOptions.TrimEntries);
                    if (values.Count == 0 && !headerSeen && !double.TryParse(cells[0], NumberStyles.Float, CultureInfo.InvariantCulture, out _) && IsHeader(cells, ref valueColumn, ref timeColumn))
                    {
                        headerSeen = true;
                        continue;
                    }

                    double value = Number(Cell(cells, valueColumn, source, lineNumber), source, lineNumber);
                    long time = cells.Length > timeColumn && cells[timeColumn].Length > 0 ? Time(cells[timeColumn], source, lineNumber) : 0;
                    values.Add(new TimedValue(value, time));
                    break;
                case ValueFormat.Ndjson:
                    values.Add(JsonLine(trimmed, source, lineNumber));
                    break;
            }
        }

        return values;
    }

    private static bool IsHeader(string[] cells, ref int valueColumn, ref int timeColumn)
    {
        int v = Array.FindIndex(cells, c => c.Equals("value", StringComparison.OrdinalIgnoreCase));
        int t = Array.FindIndex(cells, c => c.Equals("time", StringComparison.OrdinalIgnoreCase));
        if (v < 0)
        {
            return false;
        }

        valueColumn = v;
        timeColumn = t < 0 ? int.MaxValue : t;
        return true;
    }

    private static string Cell(string[] cells, int column, string source, int line) =>
        column < cells.Length ? cells[column] : throw new UsageException($"{source} line {line}: no value in column {column + 1}.");

    private static double Number(string token, string source, int line) =>
        double.TryParse(token, NumberStyles.Float, CultureInfo.InvariantCulture, out double value)
            ? value
            : throw new UsageException($"{source} line {line}: '{token}' is not a number.");

    private static long Time(string text, string source, int line)
    {
        if (long.TryParse(text, NumberStyles.Integer, CultureInfo.InvariantCulture, out long unixMs))
        {
            return unixMs;
        }

        return TimePoint.TryParse(text, 0, out long parsed, out _) && text.Contains('-', StringComparison.Ordinal)
            ? parsed
            : throw new UsageException($"{source} line {line}: time '{text}' is neither Unix milliseconds nor ISO 8601 (2026-12-02T01:00:00Z).");
    }

    private static TimedValue JsonLine(string line, string source, int lineNumber)
    {
        try
        {
            using var document = JsonDocument.Parse(line);
            JsonElement root = document.RootElement;
            if (root.ValueKind != JsonValueKind.Object || !root.TryGetProperty("value", out JsonElement value) || value.ValueKind != JsonValueKind.Number)
            {
                throw new UsageException($"{source} line {lineNumber}: expected an object with a numeric \"value\", got {Shorten(line)}.");
            }

            long time = 0;
            if (root.TryGetProperty("time", out JsonElement t))
            {
                time = t.ValueKind switch
                {
                    JsonValueKind.Number when t.TryGetInt64(out long ms) => ms,
                    JsonValueKind.String => Time(t.GetString()!, source, lineNumber),
                    _ => throw new UsageException($"{source} line {lineNumber}: \"time\" must be Unix milliseconds or an ISO 8601 string."),
                };
            }

            return new TimedValue(value.GetDouble(), time);
        }
        catch (JsonException ex)
        {
            throw new UsageException($"{source} line {lineNumber}: not JSON ({ex.Message.Split('.')[0]}).");
        }
    }

    private static string Shorten(string line) => line.Length <= 60 ? line : line[..57] + "...";
}
