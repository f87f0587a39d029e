using Google.Protobuf;
using SummaryService.Formats.V1;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Serialization;

/// <summary>
/// Converts sketches to their <c>sketch.proto</c> messages and back. Writing then reading gives a
/// sketch in the same state, whose own bytes are identical. Reading treats the bytes as untrusted
/// (they arrive from clients and from disk) and rejects any state a sketch could not be in.
/// </summary>
public static partial class SketchCodec
{
    /// <summary>Version written into <see cref="SeriesSketchState.Version"/>: 2 adds log buckets and the compact form.</summary>
    public const uint FormatVersion = 2;

    /// <summary>The version before log buckets, still read: moments, quantiles and modes only.</summary>
    public const uint RankOnlyVersion = 1;

    /// <summary>Serializes a series sketch.</summary>
    public static byte[] Serialize(SeriesSketch sketch) => ToState(sketch).ToByteArray();

    /// <summary>Reads a series sketch from bytes.</summary>
    /// <exception cref="SketchFormatException">The bytes are not a valid series sketch.</exception>
    public static SeriesSketch Deserialize(ReadOnlySpan<byte> bytes)
    {
        SeriesSketchState state;
        try
        {
            state = SeriesSketchState.Parser.ParseFrom(bytes);
        }
        catch (InvalidProtocolBufferException ex)
        {
            throw new SketchFormatException($"Sketch bytes are not a SeriesSketchState message: {ex.Message}", ex);
        }

        return FromState(state);
    }

    /// <summary>The message form of a series sketch.</summary>
    public static SeriesSketchState ToState(SeriesSketch sketch)
    {
        ArgumentNullException.ThrowIfNull(sketch);

        // A small sketch is written as the full parts it stands for, so the bytes do not depend on its form.
        (KllSketch? quantiles, LogBucketSketch? buckets, ModeSketch modes) = sketch.FullParts();
        return new SeriesSketchState
        {
            Version = sketch.EdgeBuckets is null ? FormatVersion : EdgeVersion,
            EdgeBuckets = sketch.EdgeBuckets is { } edges ? ToState(edges) : null,
            Moments = ToState(sketch.Moments),
            Quantiles = quantiles is null ? null : ToState(quantiles),
            LogBuckets = buckets is null ? null : ToState(buckets),
            Modes = ToState(modes),
            Compact = !sketch.KeepsRankPart,
            NoLogBuckets = buckets is null,
        };
    }

    /// <summary>Rebuilds a series sketch from its message form (version 1 or 2).</summary>
    /// <exception cref="SketchFormatException">The state is not one a series sketch can be in.</exception>
    public static SeriesSketch FromState(SeriesSketchState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        Check(state.Version is FormatVersion or RankOnlyVersion or EdgeVersion, $"version is {state.Version}; this reader knows versions {RankOnlyVersion}, {FormatVersion} and {EdgeVersion}.");
        Check(state.Moments is not null, "moments is missing.");
        Check(state.Modes is not null, "modes is missing.");
        Check((state.Version == EdgeVersion) == (state.EdgeBuckets is not null), state.EdgeBuckets is null ? $"edge_buckets is missing in a version {EdgeVersion} sketch." : $"edge_buckets is a version {EdgeVersion} field, set in a version {state.Version} sketch.");
        if (state.Version == EdgeVersion)
        {
            return FromEdgeState(state);
        }

        if (state.Version == RankOnlyVersion)
        {
            Check(state.Quantiles is not null, "quantiles is missing; version 1 sketches always have it.");
            Check(state.LogBuckets is null && !state.Compact && !state.NoLogBuckets, "log_buckets, compact and no_log_buckets are version 2 fields, set in a version 1 sketch.");
        }
        else
        {
            Check(state.NoLogBuckets == (state.LogBuckets is null), state.NoLogBuckets ? "no_log_buckets is set but log_buckets is present." : "log_buckets is missing and no_log_buckets is not set.");
        }

        var moments = FromState(state.Moments!);
        var quantiles = state.Quantiles is null ? null : FromState(state.Quantiles);
        var buckets = state.LogBuckets is null ? null : FromState(state.LogBuckets);
        var modes = FromState(state.Modes!);
        Check(
            (quantiles is null || quantiles.Count == moments.Count) && (buckets is null || buckets.Count == moments.Count) && modes.Count == moments.Count,
            $"counts disagree: moments.count {moments.Count}, quantiles.count {quantiles?.Count}, log_buckets total {buckets?.Count}, modes.count {modes.Count}.");
        Check(
            quantiles is null || moments.Count == 0 || (moments.Min.Equals(quantiles.Min) && moments.Max.Equals(quantiles.Max)),
            $"extremes disagree: moments.min/max are {moments.Min}/{moments.Max} but quantiles.min/max are {quantiles?.Min}/{quantiles?.Max}.");
        if (buckets is not null && moments.Count > 0)
        {
            Check(HoldsExtremes(buckets, moments.Min, moments.Max), $"log_buckets do not hold moments.min {moments.Min} and moments.max {moments.Max} in their outermost buckets.");
        }

        SeriesSketch sketch = SeriesSketch.FromParts(moments, quantiles, buckets, modes, keepsRank: !state.Compact);
        if (sketch.IsSmall && buckets is not null)
        {
            // The few values the sketch holds determine its buckets: written ones must be those.
            LogBucketSketch rebuilt = sketch.FullParts().Buckets!;
            Check(ToState(rebuilt).Equals(ToState(buckets)), "log_buckets disagree with the values the quantiles part holds.");
        }

        return sketch;
    }

    /// <summary>The message form of a log-bucket sketch: occupied buckets only, sparse where they are apart.</summary>
    public static LogBucketState ToState(LogBucketSketch sketch)
    {
        ArgumentNullException.ThrowIfNull(sketch);
        return new LogBucketState
        {
            Scale = sketch.Scale,
            MaxBuckets = (uint)sketch.MaxBuckets,
            ZeroCount = (ulong)sketch.ZeroCount,
            Positive = ToState(sketch.PositiveBuckets()),
            Negative = ToState(sketch.NegativeBuckets()),
        };
    }

    /// <summary>Rebuilds a log-bucket sketch, checking scale, bucket limit, indices and counts.</summary>
    public static LogBucketSketch FromState(LogBucketState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        Check(state.Scale is >= ExponentialMapping.MinScale and <= ExponentialMapping.MaxScale, $"log_buckets.scale is {state.Scale}; it must be between {ExponentialMapping.MinScale} and {ExponentialMapping.MaxScale}.");
        Check(state.MaxBuckets is >= LogBucketSketch.MinMaxBuckets and <= LogBucketSketch.MaxMaxBuckets, $"log_buckets.max_buckets is {state.MaxBuckets}; it must be between {LogBucketSketch.MinMaxBuckets} and {LogBucketSketch.MaxMaxBuckets}.");
        long zeros = CheckedCount(state.ZeroCount, "log_buckets.zero_count");
        ExponentialMapping mapping = ExponentialMapping.ForScale(state.Scale);
        var positive = FromState(state.Positive, "log_buckets.positive", mapping, (int)state.MaxBuckets);
        var negative = FromState(state.Negative, "log_buckets.negative", mapping, (int)state.MaxBuckets);
        long total = zeros;
        foreach ((_, long count) in positive.Concat(negative))
        {
            total = CheckedSum(total, count, "log_buckets counts");
        }

        return LogBucketSketch.Restore(state.Scale, (int)state.MaxBuckets, zeros, positive, negative);
    }

    private static LogBucketRange? ToState(IEnumerable<(int Index, long Count)> buckets)
    {
        LogBucketRange? range = null;
        int previous = 0;
        bool sparse = false;
        var gaps = new List<uint>();
        foreach ((int index, long count) in buckets)
        {
            if (range is null)
            {
                range = new LogBucketRange { Offset = index };
                gaps.Add(0);
            }
            else
            {
                gaps.Add((uint)(index - previous - 1));
                sparse |= index - previous > 1;
            }

            range.Counts.Add((ulong)count);
            previous = index;
        }

        if (sparse)
        {
            range!.Gaps.AddRange(gaps);
        }

        return range;
    }

    private static List<(int Index, long Count)> FromState(LogBucketRange? range, string field, ExponentialMapping mapping, int maxBuckets)
    {
        var buckets = new List<(int Index, long Count)>();
        if (range is null)
        {
            return buckets;
        }

        Check(range.Counts.Count > 0, $"{field} has no counts; leave an empty range out.");
        Check(range.Gaps.Count == 0 || range.Gaps.Count == range.Counts.Count, $"{field}.gaps has {range.Gaps.Count} entries for {range.Counts.Count} counts.");
        Check(range.Gaps.Count == 0 || range.Gaps[0] == 0, $"{field}.gaps[0] is {(range.Gaps.Count == 0 ? 0 : range.Gaps[0])}; the first bucket is at the offset.");

        // Indices a finite double can map to at this scale: from the smallest subnormal to the largest double.
        long lowest = mapping.IndexOf(double.Epsilon);
        long highest = mapping.IndexOf(double.MaxValue);
        long index = range.Offset;
        for (int j = 0; j < range.Counts.Count; j++)
        {
            if (j > 0)
            {
                index += 1 + (range.Gaps.Count == 0 ? 0 : range.Gaps[j]);
            }

            if (index < lowest || index > highest)
            {
                Fail($"{field} bucket {j} has index {index}, outside [{lowest}, {highest}], the indices of finite values at scale {mapping.Scale}.");
            }

            long count = CheckedCount(range.Counts[j], $"{field}.counts[{j}]");
            if (count == 0)
            {
                Fail($"{field}.counts[{j}] is 0; only occupied buckets are written.");
            }

            buckets.Add(((int)index, count));
        }

        Check(index - range.Offset < maxBuckets, $"{field} spans {index - range.Offset + 1} bucket indices, over max_buckets {maxBuckets}.");
        return buckets;
    }

    // The smallest value must fall in the lowest occupied bucket and the largest in the highest.
    private static bool HoldsExtremes(LogBucketSketch buckets, double min, double max)
    {
        LogBucketView view = LogBucketView.Of(buckets, double.NegativeInfinity, double.PositiveInfinity);
        (double firstLow, double firstHigh, _) = view.Buckets().First();
        (double lastLow, double lastHigh, _) = view.Buckets().Last();
        return min >= firstLow && min <= firstHigh && max >= lastLow && max <= lastHigh;
    }

    /// <summary>The message form of a moment sketch.</summary>
    public static MomentState ToState(MomentSketch sketch)
    {
        bool empty = sketch.Count == 0;
        return new MomentState
        {
            Count = (ulong)sketch.Count,
            Min = empty ? 0 : sketch.Min,
            Max = empty ? 0 : sketch.Max,
            Mean = empty ? 0 : sketch.Mean,
            Sum = sketch.RawSum,
            SumCompensation = sketch.RawSumCompensation,
            M2 = sketch.M2,
            M3 = sketch.M3,
            M4 = sketch.M4,
            CentralMomentsUnknown = !sketch.CentralMomentsKnown,
            ExtremesBounded = !sketch.ExtremesExact,
        };
    }

    /// <summary>Rebuilds a moment sketch, checking every field.</summary>
    public static MomentSketch FromState(MomentState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        long count = CheckedCount(state.Count, "moments.count");
        double[] fields = [state.Min, state.Max, state.Mean, state.Sum, state.SumCompensation, state.M2, state.M3, state.M4];
        string[] names = ["min", "max", "mean", "sum", "sum_compensation", "m2", "m3", "m4"];
        for (int i = 0; i < fields.Length; i++)
        {
            Check(double.IsFinite(fields[i]), $"moments.{names[i]} is {fields[i]}; it must be finite.");
        }

        Check(state.M2 >= 0, $"moments.m2 is {state.M2}; a sum of squares cannot be negative.");
        Check(state.M4 >= 0, $"moments.m4 is {state.M4}; a sum of fourth powers cannot be negative.");
        if (count == 0)
        {
            Check(
                state.Min == 0 && state.Max == 0 && state.Mean == 0 && state.Sum == 0 && state.SumCompensation == 0 && state.M2 == 0 && state.M3 == 0 && state.M4 == 0,
                "moments.count is 0 but other fields are set.");
        }
        else
        {
            Check(state.Min <= state.Max, $"moments.min {state.Min} exceeds moments.max {state.Max}.");
            Check(count > 1 || state.M2 == 0, $"moments.m2 is {state.M2} for a single value.");

            // The running mean may drift a few ulps past the extremes; anything more is damage.
            double slack = 1e-9 * Math.Max(Math.Abs(state.Min), Math.Abs(state.Max));
            Check(state.Mean >= state.Min - slack && state.Mean <= state.Max + slack, $"moments.mean {state.Mean} lies outside [min {state.Min}, max {state.Max}].");
        }

        if (state.CentralMomentsUnknown)
        {
            Check(state.M2 == 0 && state.M3 == 0 && state.M4 == 0, $"moments.central_moments_unknown is set but moments.m2, m3, m4 are {state.M2}, {state.M3}, {state.M4}; they must be 0.");
        }

        var sketch = new MomentSketch();
        sketch.Restore(count, state.Min, state.Max, state.Sum, state.SumCompensation, state.Mean, state.M2, state.M3, state.M4, !state.CentralMomentsUnknown, !state.ExtremesBounded);
        return sketch;
    }

    /// <summary>The message form of a KLL sketch.</summary>
    public static KllState ToState(KllSketch sketch)
    {
        bool empty = sketch.Count == 0;
        var state = new KllState
        {
            K = (uint)sketch.K,
            Count = (ulong)sketch.Count,
            Min = empty ? 0 : sketch.Min,
            Max = empty ? 0 : sketch.Max,
            RandomState = sketch.RandomState,
        };
        for (int h = 0; h < sketch.LevelCount; h++)
        {
            var level = new KllLevel { Compactions = (ulong)sketch.LevelCompactions(h) };
            level.Items.AddRange(sketch.LevelValues(h));
            state.Levels.Add(level);
        }

        return state;
    }

    /// <summary>Rebuilds a KLL sketch, checking k, counts, level sizes against capacity, ordering and finiteness.</summary>
    public static KllSketch FromState(KllState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        Check(state.K is >= KllSketch.MinK and <= KllSketch.MaxK, $"quantiles.k is {state.K}; it must be between {KllSketch.MinK} and {KllSketch.MaxK}.");
        int k = (int)state.K;
        long count = CheckedCount(state.Count, "quantiles.count");
        int levelCount = state.Levels.Count;
        Check(levelCount is >= 1 and <= KllSketch.MaxLevels, $"quantiles.levels has {levelCount} levels; it must have between 1 and {KllSketch.MaxLevels}.");
        Check(double.IsFinite(state.Min) && double.IsFinite(state.Max), $"quantiles.min/max are {state.Min}/{state.Max}; they must be finite.");
        if (count == 0)
        {
            Check(state.Min == 0 && state.Max == 0, "quantiles.count is 0 but min/max are set.");
        }
        else
        {
            Check(state.Min <= state.Max, $"quantiles.min {state.Min} exceeds quantiles.max {state.Max}.");
        }

        int capacity = KllSketch.TotalCapacity(k, levelCount);
        var levels = new double[levelCount][];
        var compactions = new long[levelCount];
        long retained = 0;
        long weighted = 0;
        for (int h = 0; h < levelCount; h++)
        {
            KllLevel level = state.Levels[h];
            double[] items = level.Items.ToArray();
            retained += items.Length;
            Check(retained <= capacity, $"quantiles.levels hold more than the {capacity} items {levelCount} levels allow at k = {k}.");
            for (int i = 0; i < items.Length; i++)
            {
                // Conditions first: formatting a message per item would dominate the cost of reading a sketch.
                double v = items[i];
                if (!double.IsFinite(v))
                {
                    Fail($"quantiles.levels[{h}].items[{i}] is {v}; items must be finite.");
                }

                if (!(v >= state.Min && v <= state.Max))
                {
                    Fail($"quantiles.levels[{h}].items[{i}] is {v}, outside [min {state.Min}, max {state.Max}].");
                }

                if (h > 0 && i > 0 && items[i - 1] > v)
                {
                    Fail($"quantiles.levels[{h}].items[{i}] is {v}, below the item before it; levels above 0 must be sorted.");
                }
            }

            compactions[h] = CheckedCount(level.Compactions, $"quantiles.levels[{h}].compactions");

            // Shifts are not overflow-checked, so the weight's size is checked before shifting.
            Check(items.LongLength <= (long.MaxValue >> h) && weighted <= long.MaxValue - (items.LongLength << h), $"quantiles.levels[{h}] carries more weight than a count can hold.");
            weighted += items.LongLength << h;

            levels[h] = items;
        }

        Check(weighted == count, $"quantiles.count is {count} but the levels' items stand for {weighted} values.");
        return KllSketch.Restore(k, count, state.Min, state.Max, levels, compactions, state.RandomState);
    }

    /// <summary>The message form of a mode sketch.</summary>
    public static ModeState ToState(ModeSketch sketch)
    {
        var state = new ModeState
        {
            Resolution = sketch.Resolution,
            Count = (ulong)sketch.Count,
            ExactLimit = (uint)sketch.ExactLimit,
            Width = (uint)sketch.Width,
            Depth = (uint)sketch.Depth,
            CandidateLimit = (uint)sketch.CandidateLimit,
            Continuous = sketch.IsContinuous,
        };
        if (sketch.ExactEntries is { } entries)
        {
            foreach ((long key, long count) in entries)
            {
                state.ExactKeys.Add(key);
                state.ExactCounts.Add((ulong)count);
            }
        }
        else if (!sketch.IsContinuous)
        {
            foreach (long counter in sketch.TableCounters)
            {
                state.Counters.Add((ulong)counter);
            }

            foreach ((long key, long count) in sketch.SortedCandidates())
            {
                state.Candidates.Add(key);
                state.CandidateCounts.Add((ulong)count);
            }
        }

        return state;
    }

    /// <summary>Rebuilds a mode sketch, checking its settings, keys, counts and table.</summary>
    public static ModeSketch FromState(ModeState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        ModeSketch empty;
        try
        {
            empty = new ModeSketch(state.Resolution, checked((int)state.ExactLimit), checked((int)state.Width), checked((int)state.Depth), checked((int)state.CandidateLimit));
        }
        catch (Exception ex) when (ex is ArgumentException or OverflowException)
        {
            throw new SketchFormatException($"modes settings are invalid: {ex.Message}", ex);
        }

        long count = CheckedCount(state.Count, "modes.count");
        if (state.Continuous)
        {
            Check(state.ExactKeys.Count == 0 && state.ExactCounts.Count == 0 && state.Counters.Count == 0 && state.Candidates.Count == 0 && state.CandidateCounts.Count == 0, "modes.continuous is set but keys, counters or candidates are too.");
            return ModeSketch.Restore(empty, count, null, null, []);
        }

        if (state.Counters.Count == 0)
        {
            Check(state.Candidates.Count == 0, "modes.candidates is set but the sketch has no count-min table.");
            Check(state.ExactKeys.Count == state.ExactCounts.Count, $"modes.exact_keys has {state.ExactKeys.Count} entries but modes.exact_counts has {state.ExactCounts.Count}.");
            Check(state.ExactKeys.Count <= empty.ExactLimit, $"modes.exact_keys has {state.ExactKeys.Count} keys, over modes.exact_limit {empty.ExactLimit}.");
            var entries = new (long Key, long Count)[state.ExactKeys.Count];
            long total = 0;
            for (int i = 0; i < entries.Length; i++)
            {
                long key = state.ExactKeys[i];
                CheckKey(key, $"modes.exact_keys[{i}]");
                Check(i == 0 || state.ExactKeys[i - 1] < key, $"modes.exact_keys[{i}] is not above the key before it; keys must be strictly ascending.");
                long c = CheckedCount(state.ExactCounts[i], $"modes.exact_counts[{i}]");
                Check(c > 0, $"modes.exact_counts[{i}] is 0; counted keys have positive counts.");
                total = CheckedSum(total, c, "modes.exact_counts");
                entries[i] = (key, c);
            }

            Check(total == count, $"modes.count is {count} but the exact counts add up to {total}.");
            return ModeSketch.Restore(empty, count, entries, null, []);
        }

        Check(state.ExactKeys.Count == 0 && state.ExactCounts.Count == 0, "modes has both exact counts and a count-min table.");
        long cells = (long)empty.Width * empty.Depth;
        Check(state.Counters.Count == cells, $"modes.counters has {state.Counters.Count} cells; a {empty.Width} x {empty.Depth} table has {cells}.");
        var counters = new long[cells];
        for (int row = 0; row < empty.Depth; row++)
        {
            long rowSum = 0;
            for (int col = 0; col < empty.Width; col++)
            {
                // Conditions first; messages are formatted only for the cell at fault.
                int cell = (row * empty.Width) + col;
                ulong raw = state.Counters[cell];
                if (raw > long.MaxValue || rowSum > long.MaxValue - (long)raw)
                {
                    Fail($"modes.counters[{cell}] is {raw}; the counters of row {row} add up to more than a count can hold.");
                }

                counters[cell] = (long)raw;
                rowSum += (long)raw;
            }

            Check(rowSum <= count, $"modes.counters row {row} adds up to {rowSum}, more than modes.count {count}.");
        }

        Check(state.Candidates.Count <= empty.CandidateLimit, $"modes.candidates has {state.Candidates.Count} keys, over modes.candidate_limit {empty.CandidateLimit}.");
        Check(state.CandidateCounts.Count == state.Candidates.Count, $"modes.candidate_counts has {state.CandidateCounts.Count} entries for {state.Candidates.Count} candidates.");
        var restored = ModeSketch.Restore(empty, count, null, counters, []);
        var candidates = new (long Key, long Count)[state.Candidates.Count];
        for (int i = 0; i < candidates.Length; i++)
        {
            long key = state.Candidates[i];
            CheckKey(key, $"modes.candidates[{i}]");
            Check(i == 0 || state.Candidates[i - 1] < key, $"modes.candidates[{i}] is not above the key before it; keys must be strictly ascending.");
            long tracked = CheckedCount(state.CandidateCounts[i], $"modes.candidate_counts[{i}]");
            long estimate = restored.TableEstimate(key);
            Check(tracked <= estimate, $"modes.candidate_counts[{i}] is {tracked}, above the table's estimate {estimate} for that key; tracked counts only trail the table.");
            candidates[i] = (key, tracked);
        }

        return ModeSketch.Restore(restored, count, null, counters, candidates);
    }

    private static void CheckKey(long key, string field)
    {
        double value = ModeKey.ValueOf(key);
        if (!double.IsFinite(value))
        {
            Fail($"{field} is the bits of {value}; keys must be finite values.");
        }

        if (key == long.MinValue)
        {
            Fail($"{field} is the bits of -0; zero is keyed as +0.");
        }
    }

    private static long CheckedCount(ulong value, string field)
    {
        Check(value <= long.MaxValue, $"{field} is {value}, beyond what a count can hold.");
        return (long)value;
    }

    private static long CheckedSum(long a, long b, string field)
    {
        try
        {
            return checked(a + b);
        }
        catch (OverflowException)
        {
            throw new SketchFormatException($"{field} add up to more than a count can hold.");
        }
    }

    private static void Check(bool condition, string message)
    {
        if (!condition)
        {
            Fail(message);
        }
    }

    private static void Fail(string message) => throw new SketchFormatException(message);
}
