#if BASELINE
extern alias baseline;

using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;
using Previous = baseline::SummaryService.Sketches.SeriesSketch;
using PreviousOptions = baseline::SummaryService.Sketches.Summaries.SummaryOptions;

namespace SummaryService.Benchmarks.Baseline;

/// <summary>
/// <c>Summarize</c> with the 7 default quantiles of a full sketch (1e6 values, the same data and
/// coin) in the current and the previous code, in one run. Target: no slower than the previous code.
/// </summary>
/// <remarks>The previous code's results are returned as <c>object</c>: BenchmarkDotNet's generated
/// runner cannot name a type from an aliased reference.</remarks>
[MemoryDiagnoser]
public class SummarizeAgainstPrevious
{
    private Previous _previous = null!;
    private SeriesSketch _current = null!;

    [Params(Distribution.LogNormalLatency, Distribution.StatusCodes)]
    public Distribution Distribution { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        double[] values = SampleData.Generate(Distribution, SampleData.FullSketchValues, 1);
        _current = new SeriesSketch(seed: 11);
        FullSketch.FeedInSpans(_current, values);
        _previous = new Previous(seed: 11);
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            _previous.Add(values.AsSpan(start, SampleData.SpanLength));
        }
    }

    [Benchmark(Baseline = true)]
    public object PreviousCode() => _previous.Summarize(new PreviousOptions());

    [Benchmark]
    public Summary CurrentCode() => _current.Summarize(new SummaryOptions());
}
#endif
