using SummaryService.Formats.V1;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;

namespace SummaryService.Sketches.Serialization;

/// <summary>The edge-bucket form of a series sketch (version 3): moments, modes and counts between a producer's edges.</summary>
public static partial class SketchCodec
{
    /// <summary>Version written for a sketch with edge buckets; sketches without them keep writing <see cref="FormatVersion"/>, so older readers refuse only what they cannot read.</summary>
    public const uint EdgeVersion = 3;

    /// <summary>The message form of edge buckets.</summary>
    public static EdgeBucketState ToState(EdgeBucketSketch sketch)
    {
        ArgumentNullException.ThrowIfNull(sketch);
        var state = new EdgeBucketState();
        state.Bounds.AddRange(sketch.Edges);
        state.Counts.AddRange(sketch.Counts.Select(c => (ulong)c));
        return state;
    }

    /// <summary>Rebuilds edge buckets, checking the edges and counts.</summary>
    public static EdgeBucketSketch FromState(EdgeBucketState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        if (EdgeBucketSketch.Invalid(state.Bounds, state.Counts, "edge_buckets.bounds", "edge_buckets.counts") is { } reason)
        {
            Fail(reason + ".");
        }

        return EdgeBucketSketch.Restore(state.Bounds, state.Counts);
    }

    // A version 3 sketch: edge buckets in place of quantiles and log buckets, agreeing with the moments.
    private static SeriesSketch FromEdgeState(SeriesSketchState state)
    {
        Check(state.Quantiles is null && state.LogBuckets is null && state.NoLogBuckets && state.Compact, "a sketch with edge_buckets has neither quantiles nor log_buckets, and sets compact and no_log_buckets.");
        MomentSketch moments = FromState(state.Moments!);
        ModeSketch modes = FromState(state.Modes!);
        EdgeBucketSketch edges = FromState(state.EdgeBuckets);
        Check(edges.Count == moments.Count && modes.Count == moments.Count, $"counts disagree: moments.count {moments.Count}, edge_buckets total {edges.Count}, modes.count {modes.Count}.");
        if (moments.Count > 0)
        {
            int first = Enumerable.Range(0, edges.Counts.Count).First(k => edges.Counts[k] != 0);
            int last = Enumerable.Range(0, edges.Counts.Count).Last(k => edges.Counts[k] != 0);
            Check(
                Holds(edges.Hull(first), moments.Min) && Holds(edges.Hull(last), moments.Max),
                $"edge_buckets do not hold moments.min {moments.Min} and moments.max {moments.Max} in their outermost occupied buckets.");
        }

        return SeriesSketch.FromParts(moments, null, null, modes, keepsRank: false, edges);
    }

    private static bool Holds((double Low, double High) hull, double value) => value >= hull.Low && value <= hull.High;
}
