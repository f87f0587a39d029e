namespace SummaryService.Cli.Input;

/// <summary>How values are laid out in a file or on standard input.</summary>
public enum ValueFormat
{
    /// <summary>Numbers separated by white space or new lines.</summary>
    Plain,

    /// <summary>Comma-separated lines <c>value[,time]</c>, an optional header line naming the columns.</summary>
    Csv,

    /// <summary>One JSON object per line: <c>{"value": 12.5, "time": "2026-12-02T01:00:00Z"}</c>, time optional (ISO 8601 or Unix ms).</summary>
    Ndjson,
}
