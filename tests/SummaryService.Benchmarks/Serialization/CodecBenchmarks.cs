using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Benchmarks.Serialization;

/// <summary><see cref="SketchCodec"/> round trip of a full default sketch (1e6 values).</summary>
/// <remarks>Deserialize includes the codec's validation of untrusted bytes, which is part of its real cost.</remarks>
[MemoryDiagnoser]
public class CodecBenchmarks
{
    private SeriesSketch _sketch = null!;
    private byte[] _bytes = [];

    [Params(Distribution.LogNormalLatency, Distribution.StatusCodes)]
    public Distribution Distribution { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _sketch = FullSketch.Build(Distribution, dataSeed: 1, sketchSeed: 11);
        _bytes = SketchCodec.Serialize(_sketch);
    }

    [Benchmark]
    public byte[] Serialize() => SketchCodec.Serialize(_sketch);

    [Benchmark]
    public SeriesSketch Deserialize() => SketchCodec.Deserialize(_bytes);
}
