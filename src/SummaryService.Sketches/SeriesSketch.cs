using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches;

/// <summary>
/// Everything kept about one series in one time bucket: moments, KLL quantiles and modes, fed
/// and merged together so that they always describe the same values.
/// </summary>
public sealed class SeriesSketch
{
    /// <summary>Creates an empty sketch.</summary>
    /// <param name="options">Accuracy settings; defaults when null.</param>
    /// <param name="seed">Seed of the quantile sketch's random source; leave it out outside tests.</param>
    public SeriesSketch(SeriesSketchOptions? options = null, ulong? seed = null)
    {
        options ??= SeriesSketchOptions.Default;
        Moments = new MomentSketch();
        Quantiles = new KllSketch(options.K, seed);
        Modes = new ModeSketch(options.ModeResolution, options.ModeExactLimit, options.ModeWidth, options.ModeDepth, options.ModeCandidates);
    }

    internal SeriesSketch(MomentSketch moments, KllSketch quantiles, ModeSketch modes)
    {
        Moments = moments;
        Quantiles = quantiles;
        Modes = modes;
    }

    /// <summary>Count, extremes, sum, mean and central moments.</summary>
    public MomentSketch Moments { get; }

    /// <summary>Quantiles, ranks, MAD and histograms.</summary>
    public KllSketch Quantiles { get; }

    /// <summary>Most frequent values.</summary>
    public ModeSketch Modes { get; }

    /// <summary>Number of values folded in.</summary>
    public long Count => Moments.Count;

    /// <summary>Approximate heap bytes of the whole composite (moments ~100 B plus the two sketches).</summary>
    public long EstimatedBytes => 24 + 104 + Quantiles.EstimatedBytes + Modes.EstimatedBytes;

    /// <summary>Folds in one finite value.</summary>
    public void Add(double value)
    {
        FiniteValues.Require(value);
        Moments.AddUnchecked(value);
        Quantiles.AddUnchecked(value);
        Modes.AddUnchecked(value);
    }

    /// <summary>Folds in a span of finite values; a span holding a NaN or infinity is rejected whole and changes nothing.</summary>
    public void Add(ReadOnlySpan<double> values)
    {
        FiniteValues.Require(values);
        Moments.AddUnchecked(values);
        Quantiles.AddUnchecked(values);
        Modes.AddUnchecked(values);
    }

    /// <summary>Merges another series sketch into this one; the other is left unchanged.</summary>
    public void Merge(SeriesSketch other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (ReferenceEquals(other, this))
        {
            other = Clone();
        }

        // Checked first so that a shape mismatch leaves this sketch untouched.
        if (other.Modes.Resolution.CompareTo(Modes.Resolution) != 0 || other.Modes.Width != Modes.Width || other.Modes.Depth != Modes.Depth)
        {
            throw new ArgumentException("Cannot merge series sketches whose mode sketches are keyed or shaped differently.", nameof(other));
        }

        Moments.Merge(other.Moments);
        Quantiles.Merge(other.Quantiles);
        Modes.Merge(other.Modes);
    }

    /// <summary>Creates an independent copy.</summary>
    public SeriesSketch Clone() => new(Moments.Clone(), Quantiles.Clone(), Modes.Clone());

    /// <summary>The whole descriptive summary with its bounds.</summary>
    public Summary Summarize(SummaryOptions? options = null) =>
        SummaryBuilder.Build(Moments, Quantiles, Modes, options ?? new SummaryOptions());
}
