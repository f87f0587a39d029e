namespace SummaryService.Sketches.Buckets;

/// <summary>
/// Exact counts between fixed edges, as an OpenTelemetry explicit-bounds histogram sends them:
/// with edges e₀ &lt; … &lt; eₘ₋₁ there are m + 1 buckets, and every value counted in bucket k lies
/// in the closed interval [eₖ₋₁, eₖ] (e₋₁ = −∞, eₘ = +∞). The data model's buckets are
/// (eₖ₋₁, eₖ]; only the closed hull is relied on, which is what lets log buckets (whose negative
/// side is closed below) and raw values join the same counts.
/// </summary>
/// <remarks>
/// <para>The values themselves are unknown, so nothing is ever split by guesswork: the r-th
/// smallest value lies in the bucket whose cumulative count first reaches r, and that bucket's
/// edges bound it (<see cref="LogBucketView.OfEdges"/>).</para>
/// <para>A merge keeps every edge of either side that cuts no occupied bucket of the other side
/// (<see cref="Merge"/>): edges that only cut empty buckets split nothing, so the merged counts are
/// exact and the merged edges as fine as the two sides allow.</para>
/// </remarks>
public sealed class EdgeBucketSketch
{
    /// <summary>Most edges one sketch keeps; an export point with more is refused.</summary>
    public const int MaxEdges = 4096;

    private double[] _edges;
    private long[] _counts;

    private EdgeBucketSketch(double[] edges, long[] counts)
    {
        _edges = edges;
        _counts = counts;
        Count = counts.Sum();
    }

    /// <summary>The edges, strictly increasing and finite.</summary>
    public IReadOnlyList<double> Edges => _edges;

    /// <summary>Counts of the buckets, one more than the edges.</summary>
    public IReadOnlyList<long> Counts => _counts;

    /// <summary>Number of values counted.</summary>
    public long Count { get; private set; }

    /// <summary>Approximate heap bytes: this object and its two arrays.</summary>
    public long EstimatedBytes => 32 + 24 + (8L * _edges.Length) + 24 + (8L * _counts.Length);

    /// <summary>
    /// Why edges and counts cannot form a sketch, naming the field as <paramref name="edgesField"/>
    /// and <paramref name="countsField"/> call them, or null when they can.
    /// </summary>
    public static string? Invalid(IReadOnlyList<double> edges, IReadOnlyList<ulong> counts, string edgesField, string countsField)
    {
        ArgumentNullException.ThrowIfNull(edges);
        ArgumentNullException.ThrowIfNull(counts);
        if (edges.Count > MaxEdges)
        {
            return $"{edgesField} has {edges.Count} edges; at most {MaxEdges} are kept";
        }

        for (int i = 0; i < edges.Count; i++)
        {
            if (!double.IsFinite(edges[i]))
            {
                return $"{edgesField}[{i}] is {edges[i]}; edges are finite";
            }

            if (i > 0 && edges[i] <= edges[i - 1])
            {
                return $"{edgesField}[{i}] is {edges[i]}, not above {edgesField}[{i - 1}] {edges[i - 1]}; edges strictly increase";
            }
        }

        if (counts.Count != edges.Count + 1)
        {
            return $"{countsField} has {counts.Count} counts for {edges.Count} edges; there is one bucket more than edges";
        }

        ulong total = 0;
        foreach (ulong c in counts)
        {
            total += c;
            if (total < c || total > long.MaxValue)
            {
                return $"{countsField} add up past {long.MaxValue}";
            }
        }

        return null;
    }

    /// <summary>A sketch of the given edges and counts, which must be valid (<see cref="Invalid"/>).</summary>
    public static EdgeBucketSketch Restore(IReadOnlyList<double> edges, IReadOnlyList<ulong> counts)
    {
        if (Invalid(edges, counts, "edges", "counts") is { } reason)
        {
            throw new ArgumentException(reason, nameof(edges));
        }

        return new EdgeBucketSketch([.. edges], [.. counts.Select(c => (long)c)]);
    }

    /// <summary>Empty buckets between the same edges as <paramref name="layout"/>.</summary>
    public static EdgeBucketSketch EmptyLike(EdgeBucketSketch layout)
    {
        ArgumentNullException.ThrowIfNull(layout);
        return new EdgeBucketSketch((double[])layout._edges.Clone(), new long[layout._counts.Length]);
    }

    /// <summary>
    /// The log buckets as edge buckets: each occupied bucket's edges (the mapping's own bounds,
    /// mirrored for negatives) become edges, the zeros are counted in the bucket that ends at 0,
    /// and the gaps between occupied buckets become empty buckets.
    /// </summary>
    internal static EdgeBucketSketch OfLogBuckets(OccupiedLogBuckets buckets)
    {
        ArgumentNullException.ThrowIfNull(buckets);
        var hulls = new List<(double Low, double High, long Count)>();
        ExponentialMapping mapping = buckets.Mapping;
        (int[] negIndex, long[] negCount) = buckets.Negative;
        for (int j = negIndex.Length - 1; j >= 0; j--)
        {
            hulls.Add((-mapping.Floor(negIndex[j] + 1L), -mapping.Floor(negIndex[j]), negCount[j]));
        }

        if (buckets.ZeroCount > 0)
        {
            hulls.Add((0, 0, buckets.ZeroCount));
        }

        (int[] posIndex, long[] posCount) = buckets.Positive;
        for (int j = 0; j < posIndex.Length; j++)
        {
            hulls.Add((mapping.Floor(posIndex[j]), mapping.Floor(posIndex[j] + 1L), posCount[j]));
        }

        var edges = new List<double>();
        foreach ((double low, double high, _) in hulls)
        {
            foreach (double edge in (ReadOnlySpan<double>)[low, high])
            {
                if (edges.Count == 0 || edge > edges[^1])
                {
                    edges.Add(edge);
                }
            }
        }

        double[] kept = [.. edges];
        var counts = new long[kept.Length + 1];
        foreach ((double low, double high, long count) in hulls)
        {
            counts[Holding(kept, low, high)] += count;
        }

        return new EdgeBucketSketch(kept, counts);
    }

    /// <summary>Counts finite values, each in the first bucket whose upper edge is at or above it (the data model's (eₖ₋₁, eₖ]).</summary>
    public void Add(ReadOnlySpan<double> values)
    {
        foreach (double value in values)
        {
            _counts[Below(_edges, value)]++;
        }

        Count += values.Length;
    }

    /// <summary>
    /// Merges another sketch in. The merged edges are those of either side that lie strictly
    /// inside no occupied bucket of the other side; every occupied bucket of either side then lies
    /// within one merged bucket, which takes its count whole.
    /// </summary>
    public void Merge(EdgeBucketSketch other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (_edges.AsSpan().SequenceEqual(other._edges))
        {
            for (int k = 0; k < _counts.Length; k++)
            {
                _counts[k] += other._counts[k];
            }

            Count += other.Count;
            return;
        }

        var merged = new List<double>(_edges.Length + other._edges.Length);
        int i = 0;
        int j = 0;
        while (i < _edges.Length || j < other._edges.Length)
        {
            double edge = j >= other._edges.Length || (i < _edges.Length && _edges[i] <= other._edges[j]) ? _edges[i] : other._edges[j];
            bool ours = i < _edges.Length && _edges[i] == edge;
            bool theirs = j < other._edges.Length && other._edges[j] == edge;
            i += ours ? 1 : 0;
            j += theirs ? 1 : 0;
            if ((ours || !CutsOccupied(edge)) && (theirs || !other.CutsOccupied(edge)))
            {
                merged.Add(edge);
            }
        }

        double[] edges = [.. merged];
        var counts = new long[edges.Length + 1];
        foreach (EdgeBucketSketch side in (ReadOnlySpan<EdgeBucketSketch>)[this, other])
        {
            for (int k = 0; k < side._counts.Length; k++)
            {
                if (side._counts[k] != 0)
                {
                    (double low, double high) = side.Hull(k);
                    counts[Holding(edges, low, high)] += side._counts[k];
                }
            }
        }

        (_edges, _counts, Count) = (edges, counts, Count + other.Count);
    }

    /// <summary>An independent copy.</summary>
    public EdgeBucketSketch Clone() => new((double[])_edges.Clone(), (long[])_counts.Clone());

    /// <summary>The closed interval bucket <paramref name="k"/> covers; the outer buckets reach to infinity.</summary>
    public (double Low, double High) Hull(int k) =>
        (k == 0 ? double.NegativeInfinity : _edges[k - 1], k == _edges.Length ? double.PositiveInfinity : _edges[k]);

    // True when the edge lies strictly inside an occupied bucket of this sketch (an edge of its own cuts nothing).
    private bool CutsOccupied(double edge)
    {
        int k = Below(_edges, edge);
        return _counts[k] != 0 && (k == _edges.Length || _edges[k] != edge);
    }

    // The bucket of the edges that holds the closed interval [low, high], which no edge cuts: the
    // one ending at the first edge at or above high.
    private static int Holding(double[] edges, double low, double high)
    {
        int k = Below(edges, high);
        System.Diagnostics.Debug.Assert(k == 0 || edges[k - 1] <= low, "an edge cuts a bucket it was to hold whole");
        return k;
    }

    // Number of edges strictly below x: the index of the bucket (eₖ₋₁, eₖ] that holds x.
    private static int Below(double[] edges, double x)
    {
        int lo = 0;
        int hi = edges.Length;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            if (edges[mid] < x)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        return lo;
    }
}
