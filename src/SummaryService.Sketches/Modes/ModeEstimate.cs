namespace SummaryService.Sketches.Modes;

/// <summary>
/// A value's estimated count with its interval: the true count lies in [<see cref="CountLow"/>,
/// <see cref="CountHigh"/>] — always at or below the high end, and at or above the low end with the
/// sketch's stated probability. Exact counts have a zero-width interval.
/// </summary>
/// <param name="Value">The value, or the centre of its bin when the sketch keys by resolution.</param>
/// <param name="Count">Estimated number of occurrences.</param>
/// <param name="CountLow">Lower end of the count interval.</param>
/// <param name="CountHigh">Upper end of the count interval.</param>
public readonly record struct ModeEstimate(double Value, long Count, long CountLow, long CountHigh);
