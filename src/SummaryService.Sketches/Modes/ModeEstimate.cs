namespace SummaryService.Sketches.Modes;

/// <summary>
/// A mode: a value (or, on continuous data, a region of peak density) with how many values it
/// holds. For an exact value the true count lies in [<see cref="CountLow"/>, <see cref="CountHigh"/>]
/// — always at or below the high end, and at or above the low end with the sketch's stated
/// probability; exact counts have a zero-width interval. For a region the count is the exact number
/// of values in its hump.
/// </summary>
/// <param name="Value">The value, the centre of its bin when the sketch keys by resolution, or the densest bucket's midpoint for a region.</param>
/// <param name="Count">Estimated number of occurrences (exact value), or values in the hump (region).</param>
/// <param name="CountLow">Lower end of the count interval.</param>
/// <param name="CountHigh">Upper end of the count interval.</param>
public readonly record struct ModeEstimate(double Value, long Count, long CountLow, long CountHigh)
{
    /// <summary>Whether this is one value counted as such, or a region where the density peaks.</summary>
    public ModeKind Kind { get; init; }

    /// <summary>Lower end of where the mode lies: <see cref="Value"/> for an exact value; for a region, where the density cannot be told apart from its peak.</summary>
    public double Low { get; init; }

    /// <summary>Upper end of where the mode lies.</summary>
    public double High { get; init; }

    /// <summary>Share of all values this mode holds: <see cref="Count"/> / n.</summary>
    public double Share { get; init; }
}

/// <summary>What a <see cref="ModeEstimate"/> stands for.</summary>
public enum ModeKind
{
    /// <summary>One value (or one resolution bin) and how often it occurs.</summary>
    ExactValue = 0,

    /// <summary>A peak of the density read from the log buckets, with the values of its hump.</summary>
    Region = 1,
}
