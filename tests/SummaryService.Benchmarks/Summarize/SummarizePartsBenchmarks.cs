using BenchmarkDotNet.Attributes;
using MathNet.Numerics.Distributions;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Benchmarks.Summarize;

/// <summary>
/// The expensive steps of <see cref="SeriesSketch.Summarize"/> one by one on a full sketch, so that
/// a summary over target can be traced to its cause.
/// </summary>
/// <remarks>Steps that are internal to the library are reached through its InternalsVisibleTo grant.</remarks>
[MemoryDiagnoser]
public class SummarizePartsBenchmarks
{
    private SeriesSketch _sketch = null!;
    private SummaryBounds _bounds = null!;

    [Params(Distribution.LogNormalLatency, Distribution.StatusCodes)]
    public Distribution Distribution { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _sketch = FullSketch.Build(Distribution, dataSeed: 1, sketchSeed: 11);
        _bounds = new SummaryBounds(_sketch.Moments, _sketch.Quantiles, _sketch.LogBuckets, SummaryOptions.DefaultConfidence);
    }

    /// <summary>Sorted weighted view plus the four Hoeffding bounds; returned as object because the type is internal.</summary>
    [Benchmark]
    public object RankBoundsWithView() => new RankBounds(_sketch.Quantiles!, SummaryOptions.DefaultConfidence);

    /// <summary>Both parts' readers: the KLL view and bounds, and the log buckets in value order.</summary>
    [Benchmark]
    public object SummaryBoundsWithViews() => new SummaryBounds(_sketch.Moments, _sketch.Quantiles, _sketch.LogBuckets, SummaryOptions.DefaultConfidence);

    [Benchmark]
    public KllSortedView SortedViewOnly() => _sketch.Quantiles!.CreateView();

    [Benchmark]
    public QuantileEstimate[] SevenQuantilesFromBounds() =>
        SummaryOptions.DefaultQuantiles.Select(q => _bounds.Quantile(q)).ToArray();

    [Benchmark]
    public (double Mad, double Low, double High, BoundSource LowSource, BoundSource HighSource) MadWithInterval() =>
        MedianAbsoluteDeviation.Estimate(_bounds);

    [Benchmark]
    public ModeEstimate[] Modes() => _sketch.Modes.Modes(SummaryOptions.DefaultMaxModes);

    /// <summary>Density peaks of the log buckets: the modes of continuous data.</summary>
    [Benchmark]
    public List<ModeEstimate> DensityPeaksOfBuckets() => Sketches.Buckets.DensityPeaks.Find(_sketch.LogBuckets!, _sketch.Moments.Min, _sketch.Moments.Max, _sketch.Count);

    [Benchmark]
    public int ModeCandidateCount() => _sketch.Modes.ModeCandidateCount();

    /// <summary>Critical value of the mean's interval, which the summary computes every time (series expansion at this many degrees of freedom).</summary>
    [Benchmark]
    public double StudentTCriticalValue() => StudentTCritical.TwoSided(_sketch.Count - 1, SummaryOptions.DefaultConfidence);

    /// <summary>The same by root-finding (MathNet.Numerics), as the summary computed it before.</summary>
    [Benchmark]
    public double StudentTByRootFinding() =>
        StudentT.InvCDF(0, 1, _sketch.Count - 1, 1 - ((1 - SummaryOptions.DefaultConfidence) / 2));
}
