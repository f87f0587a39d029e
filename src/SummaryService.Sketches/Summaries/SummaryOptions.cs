namespace SummaryService.Sketches.Summaries;

/// <summary>What a summary should contain beyond the statistics it always carries.</summary>
public sealed record SummaryOptions
{
    /// <summary>Quantiles reported when none are asked for: extremes, quartiles, p90 and p99.</summary>
    public static readonly IReadOnlyList<double> DefaultQuantiles = [0, 0.25, 0.5, 0.75, 0.9, 0.99, 1];

    /// <summary>Confidence used when none is given.</summary>
    public const double DefaultConfidence = 0.99;

    /// <summary>Modes listed when no limit is given.</summary>
    public const int DefaultMaxModes = 10;

    /// <summary>Probabilities in [0, 1] to estimate.</summary>
    public IReadOnlyList<double> Quantiles { get; init; } = DefaultQuantiles;

    /// <summary>Confidence of every interval, strictly between 0 and 1.</summary>
    public double Confidence { get; init; } = DefaultConfidence;

    /// <summary>Thresholds whose share of values at or below is wanted (SLO questions).</summary>
    public IReadOnlyList<double> RankOf { get; init; } = [];

    /// <summary>Largest number of modes listed.</summary>
    public int MaxModes { get; init; } = DefaultMaxModes;

    /// <summary>Histogram to build, or null for none.</summary>
    public HistogramSpec? Histogram { get; init; }

    /// <summary>Checks every option and names the first one that is out of range.</summary>
    public void Validate()
    {
        Sketches.Confidence.Require(Confidence);
        for (int i = 0; i < Quantiles.Count; i++)
        {
            double q = Quantiles[i];
            if (!(q >= 0 && q <= 1))
            {
                throw new ArgumentOutOfRangeException(nameof(Quantiles), q, $"Quantiles[{i}] is {q}; quantiles must lie in [0, 1].");
            }
        }

        for (int i = 0; i < RankOf.Count; i++)
        {
            if (!double.IsFinite(RankOf[i]))
            {
                throw new ArgumentOutOfRangeException(nameof(RankOf), RankOf[i], $"RankOf[{i}] is {RankOf[i]}; thresholds must be finite.");
            }
        }

        ArgumentOutOfRangeException.ThrowIfNegative(MaxModes);
        if (Histogram is { } spec)
        {
            for (int i = 0; i < spec.Edges.Count; i++)
            {
                if (!double.IsFinite(spec.Edges[i]) || (i > 0 && !(spec.Edges[i] > spec.Edges[i - 1])))
                {
                    throw new ArgumentOutOfRangeException(nameof(Histogram), spec.Edges[i], $"Histogram.Edges[{i}] is {spec.Edges[i]}; edges must be finite and strictly ascending.");
                }
            }

            if (spec.Edges.Count == 1)
            {
                throw new ArgumentOutOfRangeException(nameof(Histogram), spec.Edges.Count, "Histogram.Edges needs at least two edges.");
            }

            if (spec.LogBuckets && spec.Edges.Count > 0)
            {
                throw new ArgumentOutOfRangeException(nameof(Histogram), spec.Edges.Count, "Histogram.LogBuckets takes its edges from the buckets; give no Edges with it.");
            }

            if (spec.Edges.Count == 0 && spec.BinCount is < 1 or > 10_000)
            {
                throw new ArgumentOutOfRangeException(nameof(Histogram), spec.BinCount, "Histogram.BinCount must be between 1 and 10000.");
            }
        }
    }
}
