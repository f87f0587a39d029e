namespace SummaryService.Sketches.Summaries;

/// <summary>What ranks the groups of a split: how far each group's distribution departs from the rest's.</summary>
public enum StandoutMeasure
{
    /// <summary>The Kolmogorov–Smirnov distance to the rest: any difference of shape or place.</summary>
    Distance = 0,

    /// <summary>A quantile's ratio group / rest, ranked by |ln ratio|: "twice as slow" and "half as slow" rank alike.</summary>
    QuantileRatio = 1,

    /// <summary>A quantile's shift group − rest, ranked by its size in the metric's unit.</summary>
    QuantileShift = 2,
}

/// <summary>What a split reports and ranks by.</summary>
public sealed record StandoutOptions
{
    /// <summary>Quantiles compared when none are asked for: the median, p90 and p99.</summary>
    public static readonly IReadOnlyList<double> DefaultQuantiles = [0.5, 0.9, 0.99];

    /// <summary>Probabilities strictly between 0 and 1 whose shift against the rest is reported.</summary>
    public IReadOnlyList<double> Quantiles { get; init; } = DefaultQuantiles;

    /// <summary>Confidence of every interval and verdict, strictly between 0 and 1.</summary>
    public double Confidence { get; init; } = SummaryOptions.DefaultConfidence;

    /// <summary>What ranks the groups.</summary>
    public StandoutMeasure Measure { get; init; } = StandoutMeasure.Distance;

    /// <summary>The quantile a ratio or shift ranks by; one of <see cref="Quantiles"/>.</summary>
    public double MeasureQuantile { get; init; } = 0.99;

    /// <summary>Checks every option and names the first one that is out of range.</summary>
    public void Validate()
    {
        Sketches.Confidence.Require(Confidence);
        for (int i = 0; i < Quantiles.Count; i++)
        {
            double q = Quantiles[i];
            if (!(q > 0 && q < 1))
            {
                throw new ArgumentOutOfRangeException(nameof(Quantiles), q, $"Quantiles[{i}] is {q}; a population quantile is bounded only strictly between 0 and 1.");
            }
        }

        if (!Enum.IsDefined(Measure))
        {
            throw new ArgumentOutOfRangeException(nameof(Measure), Measure, $"Measure {(int)Measure} is not a known measure.");
        }

        if (Measure != StandoutMeasure.Distance && !Quantiles.Contains(MeasureQuantile))
        {
            throw new ArgumentOutOfRangeException(nameof(MeasureQuantile), MeasureQuantile, $"MeasureQuantile {MeasureQuantile} is not one of the quantiles compared.");
        }
    }
}
