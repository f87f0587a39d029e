namespace SummaryService.Cli.Input;

/// <summary>One measurement read from input; <see cref="TimeUnixMs"/> 0 means "use the batch time".</summary>
/// <param name="Value">The measurement.</param>
/// <param name="TimeUnixMs">Its own timestamp in Unix milliseconds, or 0.</param>
public readonly record struct TimedValue(double Value, long TimeUnixMs);
