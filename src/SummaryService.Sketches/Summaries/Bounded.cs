namespace SummaryService.Sketches.Summaries;

/// <summary>
/// An interval with the source of each end, made by intersecting candidate intervals. Every
/// candidate holds the truth on its own terms — the deterministic ones always, the KLL one with the
/// stated confidence — so the intersection does too. Should the KLL interval miss the deterministic
/// ones altogether (its failure case), it is left out rather than giving an empty interval.
/// </summary>
internal readonly record struct Bounded(double Low, BoundSource LowSource, double High, BoundSource HighSource)
{
    /// <summary>The middle of the interval.</summary>
    public double Middle => Low + ((High - Low) / 2);

    /// <summary>The intersection; of ends that tie, the surer source is named.</summary>
    public static Bounded Intersect(ReadOnlySpan<(double Low, double High, BoundSource Source)> candidates)
    {
        Bounded all = Over(candidates, withRank: true);
        return all.Low <= all.High ? all : Over(candidates, withRank: false);
    }

    /// <summary>The surer of two sources: exact, then the range, then the log buckets, then the edges, then the rank bound.</summary>
    public static BoundSource Surer(BoundSource a, BoundSource b) => a == BoundSource.None ? b : b == BoundSource.None ? a : Sureness(a) <= Sureness(b) ? a : b;

    /// <summary>The less sure of two sources: what a figure derived from both can claim.</summary>
    public static BoundSource Weaker(BoundSource a, BoundSource b) => Sureness(a) >= Sureness(b) ? a : b;

    // Rank from surest to least sure; None (nothing to bound) ranks first. The edges are certain
    // like the log buckets; only the rank bound holds with a confidence.
    private static int Sureness(BoundSource source) => source == BoundSource.Edges ? 3 : (int)source;

    private static Bounded Over(ReadOnlySpan<(double Low, double High, BoundSource Source)> candidates, bool withRank)
    {
        double low = double.NegativeInfinity;
        double high = double.PositiveInfinity;
        BoundSource lowSource = BoundSource.None;
        BoundSource highSource = BoundSource.None;
        foreach ((double l, double h, BoundSource source) in candidates)
        {
            if (!withRank && source == BoundSource.RankError)
            {
                continue;
            }

            if (l > low || (l == low && Surer(source, lowSource) == source))
            {
                (low, lowSource) = (l, source);
            }

            if (h < high || (h == high && Surer(source, highSource) == source))
            {
                (high, highSource) = (h, source);
            }
        }

        return new Bounded(low, lowSource, high, highSource);
    }
}
