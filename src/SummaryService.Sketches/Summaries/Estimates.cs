namespace SummaryService.Sketches.Summaries;

/// <summary>
/// A quantile with its value interval: the true sample quantile (Hyndman &amp; Fan definition 7)
/// lies in [<see cref="Low"/>, <see cref="High"/>] with at least the summary's confidence.
/// </summary>
/// <param name="Q">Requested probability in [0, 1].</param>
/// <param name="Value">Estimate; exact when the sketch is exact.</param>
/// <param name="Low">Lower end of the value interval.</param>
/// <param name="High">Upper end of the value interval.</param>
/// <param name="RankError">Normalized rank error ε of the estimate at the summary's confidence.</param>
public readonly record struct QuantileEstimate(double Q, double Value, double Low, double High, double RankError);

/// <summary>Share of values at or below <see cref="Value"/>, with its interval at the summary's confidence.</summary>
/// <param name="Value">Threshold asked about.</param>
/// <param name="Fraction">Estimated share of values ≤ <see cref="Value"/>.</param>
/// <param name="Low">Lower end of the interval.</param>
/// <param name="High">Upper end of the interval.</param>
public readonly record struct RankEstimate(double Value, double Fraction, double Low, double High);

/// <summary>
/// One histogram bin [<see cref="Lower"/>, <see cref="Upper"/>) — the last bin also holds its upper
/// edge — with its estimated count and an interval of ±2t values (t the point rank error).
/// </summary>
public readonly record struct HistogramBin(double Lower, double Upper, double Count, double CountLow, double CountHigh);

/// <summary>Minimum, quartiles and maximum; the extremes are always exact.</summary>
public readonly record struct FiveNumberSummary(double Min, QuantileEstimate LowerQuartile, QuantileEstimate Median, QuantileEstimate UpperQuartile, double Max);
