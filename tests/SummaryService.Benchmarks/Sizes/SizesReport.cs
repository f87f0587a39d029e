using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Benchmarks.Sizes;

/// <summary>
/// Serialized and in-memory sizes of default sketches, checked against the targets: a full default
/// sketch serializes to at most 16 KB and a sketch holding 10 values takes at most 1 KB of memory.
/// </summary>
internal static class SizesReport
{
    private const int SerializedTargetBytes = 16 * 1024;
    private const int SmallSketchMemoryTargetBytes = 1024;
    private const int SmallSketchValues = 10;

    // What a 10 s bucket of a quiet series holds in the 10,000-series load run.
    private const int QuietBucketValues = 4;

    // Enough copies for the heap-size estimate to settle; full sketches are large enough with few.
    private const int SmallSketchCopies = 1000;
    private const int FullSketchCopies = 16;

    private static readonly Distribution[] s_distributions = Enum.GetValues<Distribution>();

    public static void Write(TextWriter output)
    {
        WriteSerialized(output);
        output.WriteLine();
        WriteInMemory(output);
        output.WriteLine();
        WriteBuckets(output);
    }

    // A bucket as the store keeps it: a first-tier bucket once the next one has opened (trimmed), and
    // an aged bucket of a later tier (compact). Sizes: 2,778 values is the load run's 10 s bucket,
    // 1e6 a busy one; 1,000 / 10,000 / 60,000 are 1 min / 10 min / 1 h at 1,000 values a minute.
    private static void WriteBuckets(TextWriter output)
    {
        const int FullTarget = 12 * 1024;
        const int CompactTarget = 2 * 1024;
        output.WriteLine($"Buckets as the store keeps them (targets: full first-tier bucket <= {FullTarget} bytes, full aged bucket <= {CompactTarget} bytes)");
        output.WriteLine($"{"distribution",-18}{"values",10}{"bucket",16}{"live~",9}{"own",9}{"KLL items",11}{"KLL levels",12}{"modes",11}{"form",9}  verdict");
        foreach (Distribution distribution in new[] { Distribution.LogNormalLatency, Distribution.StatusCodes })
        {
            foreach (int count in new[] { 2778, SampleData.FullSketchValues })
            {
                double[] values = SampleData.Generate(distribution, count, seed: 1);
                WriteBucketRow(output, distribution, values, "first, written", sketch => { }, target: null);
                WriteBucketRow(output, distribution, values, "first, closed", sketch => sketch.TrimExcess(), FullTarget);
            }

            foreach (int count in new[] { 1000, 10_000, 60_000, SampleData.FullSketchValues })
            {
                double[] values = SampleData.Generate(distribution, count, seed: 1);
                WriteBucketRow(output, distribution, values, "aged (compact)", sketch => sketch.Compact(), CompactTarget);
            }
        }
    }

    private static void WriteBucketRow(TextWriter output, Distribution distribution, double[] values, string bucket, Action<SeriesSketch> keep, int? target)
    {
        SeriesSketch Build()
        {
            SeriesSketch sketch = InSpans(values);
            keep(sketch);
            return sketch;
        }

        SeriesSketch sketch = Build();
        long live = LiveBytesMeter.Measure(Build, FullSketchCopies);
        string verdict = target is null ? "-" : Math.Max(live, sketch.EstimatedBytes) <= target ? "within target" : "OVER TARGET";
        output.WriteLine($"{distribution,-18}{values.Length,10}{bucket,16}{live,9}{sketch.EstimatedBytes,9}{Describe(sketch)}  {verdict}");
    }

    private static void WriteSerialized(TextWriter output)
    {
        output.WriteLine($"Serialized size of a default sketch (target: full sketch <= {SerializedTargetBytes} bytes)");
        output.WriteLine($"{"distribution",-18}{"values",10}{"bytes",10}{"KLL items",11}{"KLL levels",12}{"modes",11}{"form",9}  verdict");
        foreach (Distribution distribution in s_distributions)
        {
            WriteSerializedRow(output, distribution, SampleData.FullSketchValues, SerializedTargetBytes);
        }

        foreach (Distribution distribution in s_distributions)
        {
            WriteSerializedRow(output, distribution, SmallSketchValues, target: null);
        }
    }

    private static void WriteSerializedRow(TextWriter output, Distribution distribution, int valueCount, int? target)
    {
        SeriesSketch sketch = FullSketch.Build(distribution, dataSeed: 1, sketchSeed: 11, valueCount);
        int bytes = SketchCodec.Serialize(sketch).Length;
        output.WriteLine($"{distribution,-18}{valueCount,10}{bytes,10}{Describe(sketch)}  {Verdict(bytes, target)}");
    }

    private static void WriteInMemory(TextWriter output)
    {
        output.WriteLine("In-memory size: bytes allocated by construction + adds (an upper bound on live bytes)");
        output.WriteLine("and live bytes estimated from the collected heap while many copies are held; 'own' is SeriesSketch.EstimatedBytes");
        output.WriteLine($"(target: {SmallSketchValues}-value sketch <= {SmallSketchMemoryTargetBytes} bytes)");
        output.WriteLine($"{"distribution",-18}{"values",10}{"fed",8}{"allocated",11}{"live~",9}{"own",9}{"KLL items",11}{"KLL levels",12}{"modes",11}{"form",9}  verdict");
        foreach (Distribution distribution in s_distributions)
        {
            double[] few = SampleData.Generate(distribution, SmallSketchValues, seed: 1);
            WriteInMemoryRow(output, distribution, few, "span", () => InSpans(few), SmallSketchMemoryTargetBytes, SmallSketchCopies);
            WriteInMemoryRow(output, distribution, few, "single", () => OneAtATime(few), SmallSketchMemoryTargetBytes, SmallSketchCopies);
        }

        foreach (Distribution distribution in s_distributions)
        {
            double[] quiet = SampleData.Generate(distribution, QuietBucketValues, seed: 1);
            WriteInMemoryRow(output, distribution, quiet, "span", () => InSpans(quiet), SmallSketchMemoryTargetBytes, SmallSketchCopies);
        }

        foreach (Distribution distribution in s_distributions)
        {
            double[] full = SampleData.Generate(distribution, SampleData.FullSketchValues, seed: 1);
            WriteInMemoryRow(output, distribution, full, "span", () => InSpans(full), target: null, FullSketchCopies);
        }
    }

    private static void WriteInMemoryRow(TextWriter output, Distribution distribution, double[] values, string fed, Func<SeriesSketch> build, int? target, int copies)
    {
        (SeriesSketch sketch, long bytes) = AllocationMeter.Measure(build);
        long live = LiveBytesMeter.Measure(build, copies);
        output.WriteLine($"{distribution,-18}{values.Length,10}{fed,8}{bytes,11}{live,9}{sketch.EstimatedBytes,9}{Describe(sketch)}  {MemoryVerdict(bytes, live, target)}");
    }

    private static SeriesSketch InSpans(double[] values)
    {
        var sketch = new SeriesSketch(seed: 11);
        FullSketch.FeedInSpans(sketch, values);
        return sketch;
    }

    private static SeriesSketch OneAtATime(double[] values)
    {
        var sketch = new SeriesSketch(seed: 11);
        foreach (double value in values)
        {
            sketch.Add(value);
        }

        return sketch;
    }

    // Read from a copy: reading the parts of a small sketch turns it into the full form.
    private static string Describe(SeriesSketch sketch)
    {
        SeriesSketch parts = sketch.Clone();
        string form = sketch.IsSmall ? "small" : sketch.KeepsRankPart ? "full" : "compact";
        string modes = parts.Modes.IsExact ? "exact" : parts.Modes.IsContinuous ? "density" : "count-min";
        return $"{parts.Quantiles?.RetainedItems,11}{parts.Quantiles?.LevelCount,12}{modes,11}{form,9}";
    }

    // The allocated figure is an upper bound, so only it can prove the target met; when it is over,
    // the live estimate tells whether the excess is garbage from buffer growth or real footprint.
    private static string MemoryVerdict(long allocated, long live, int? target) => target switch
    {
        null => "-",
        int limit when allocated <= limit => "within target",
        int limit when live <= limit => $"allocated over by {allocated - limit} bytes, live within target",
        int limit => $"OVER target by {live - limit} live bytes",
    };

    private static string Verdict(long bytes, int? target) => target switch
    {
        null => "-",
        int limit when bytes <= limit => "within target",
        int limit => $"OVER target by {bytes - limit} bytes",
    };
}
