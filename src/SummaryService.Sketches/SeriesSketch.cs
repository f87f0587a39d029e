using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches;

/// <summary>
/// Everything kept about one series in one time bucket: moments, KLL quantiles, log buckets and
/// modes, fed and merged together so that they always describe the same values.
/// </summary>
/// <remarks>
/// <para>Most buckets hold a few hundred values at most, for which the KLL and mode parts would be
/// exact lists of those values anyway. So a sketch starts small: moments plus the raw values in
/// arrival order (about 1.6 KB for 200 values instead of about 6 KB). It becomes the full composite,
/// by feeding the held values to fresh parts, once it would hold more than
/// <see cref="SmallValueLimit"/> values, when a full sketch is merged into it, or when a part is
/// read. Below that limit the full parts would never compact nor leave their exact mode counter, and
/// the log buckets depend on the set of values only, so every answer, merge and serialized byte is
/// the same in either form; the KLL coin is only seeded, never drawn, until the sketch is full.</para>
/// <para>Parts may be missing, and an answer then rests on the parts that are there (the summary
/// says which, <see cref="Summary.Form"/>): an aged bucket is compacted (<see cref="Compact"/>) to
/// moments, log buckets and exact mode counts; a sketch written before log buckets existed has
/// none unless its KLL part still holds every value. A merge keeps a part only if both sides have
/// it, since no part can stand for values it never saw.</para>
/// <para>A sketch of explicit-bounds histogram points has edge buckets (<see cref="EdgeBuckets"/>)
/// and neither KLL nor log buckets. Merged with any other sketch it stays that way: the other
/// side's held values are counted between the edges, its log buckets join as buckets with their own
/// edges (<see cref="EdgeBucketSketch.Merge"/>), and a side with neither leaves no edge buckets.</para>
/// </remarks>
public sealed class SeriesSketch
{
    /// <summary>Most values a sketch keeps raw before it becomes the full composite (lower when k or the mode exact limit is lower).</summary>
    public const int SmallValueLimit = 200;

    // Object header 16 B and eight fields of 8 B; a moment sketch is a 16 B header, nine 8 B fields
    // and a flag padded to 8 B.
    private const long OwnBytes = 16 + (8 * 8);
    private const long MomentBytes = 16 + (10 * 8);
    private const long ArrayHeaderBytes = 24;

    private readonly MomentSketch _moments;
    private readonly SeriesSketchOptions _options;
    private readonly ulong _seed;
    private KllSketch? _quantiles;
    private LogBucketSketch? _buckets;
    private ModeSketch? _modes;

    // Explicit-bounds histogram counts; only ever in a grown sketch, which then has no KLL part nor log buckets.
    private EdgeBucketSketch? _edges;

    // The held values while small (length ≥ count, null while empty); null once grown.
    private double[]? _small;
    private bool _grown;

    // False for an aged (compact) bucket: growing builds no KLL part.
    private bool _keepsRank = true;

    /// <summary>Creates an empty sketch.</summary>
    /// <param name="options">Accuracy settings; defaults when null.</param>
    /// <param name="seed">Seed of the quantile sketch's random source; leave it out outside tests.</param>
    public SeriesSketch(SeriesSketchOptions? options = null, ulong? seed = null)
    {
        options ??= SeriesSketchOptions.Default;
        KllSketch.RequireK(options.K);
        LogBucketSketch.RequireSettings(options.LogScale, options.LogMaxBuckets);
        ModeSketch.RequireSettings(options.ModeResolution, options.ModeExactLimit, options.ModeWidth, options.ModeDepth, options.ModeCandidates);
        _options = options;
        _moments = new MomentSketch();
        _seed = seed ?? (ulong)Random.Shared.NextInt64();
        if (SmallLimitOf(options) == 0)
        {
            Grow();
        }
    }

    private SeriesSketch(MomentSketch moments, SeriesSketchOptions options, ulong seed)
    {
        _moments = moments;
        _options = options;
        _seed = seed;
    }

    /// <summary>Accuracy settings this sketch was made with (or read back with).</summary>
    public SeriesSketchOptions Options => _options;

    /// <summary>Count, extremes, sum, mean and central moments.</summary>
    public MomentSketch Moments => _moments;

    /// <summary>KLL quantiles, or null when this sketch keeps none (compact or merged with a compact one). Reading it turns a small sketch into its full form.</summary>
    public KllSketch? Quantiles
    {
        get
        {
            Grow();
            return _quantiles;
        }
    }

    /// <summary>Log buckets, or null for a sketch written before they existed (and merges with one). Reading it turns a small sketch into its full form.</summary>
    public LogBucketSketch? LogBuckets
    {
        get
        {
            Grow();
            return _buckets;
        }
    }

    /// <summary>Edge buckets of explicit-bounds histograms, or null for a sketch of values and log buckets.</summary>
    public EdgeBucketSketch? EdgeBuckets => _edges;

    /// <summary>Exact mode counts or their count-min form. Reading it turns a small sketch into its full form.</summary>
    public ModeSketch Modes
    {
        get
        {
            Grow();
            return _modes!;
        }
    }

    /// <summary>True while the sketch keeps its values raw rather than in the parts.</summary>
    public bool IsSmall => !_grown;

    /// <summary>False for a compact sketch: it builds and keeps no KLL part.</summary>
    public bool KeepsRankPart => _keepsRank && (!_grown || _quantiles is not null);

    /// <summary>Number of values folded in.</summary>
    public long Count => _moments.Count;

    /// <summary>Approximate heap bytes of the whole composite: this object, the moments, and either the held values or the parts.</summary>
    public long EstimatedBytes => _grown
        ? OwnBytes + MomentBytes + (_quantiles?.EstimatedBytes ?? 0) + (_buckets?.EstimatedBytes ?? 0) + (_edges?.EstimatedBytes ?? 0) + _modes!.EstimatedBytes
        : OwnBytes + MomentBytes + (_small is null ? 0 : ArrayHeaderBytes + (8L * _small.Length));

    /// <summary>Folds in one finite value.</summary>
    public void Add(double value)
    {
        FiniteValues.Require(value);
        if (!_grown)
        {
            if (TryHold([value]))
            {
                _moments.AddUnchecked(value);
                return;
            }

            Grow();
        }

        _moments.AddUnchecked(value);
        _quantiles?.AddUnchecked(value);
        _buckets?.AddUnchecked(value);
        _edges?.Add([value]);
        _modes!.AddUnchecked(value);
    }

    /// <summary>Folds in a span of finite values; a span holding a NaN or infinity is rejected whole and changes nothing.</summary>
    public void Add(ReadOnlySpan<double> values)
    {
        FiniteValues.Require(values);
        if (!_grown)
        {
            if (TryHold(values))
            {
                _moments.AddUnchecked(values);
                return;
            }

            Grow();
        }

        _moments.AddUnchecked(values);
        _quantiles?.AddUnchecked(values);
        _buckets?.AddUnchecked(values);
        _edges?.Add(values);
        _modes!.AddUnchecked(values);
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
        SeriesSketchOptions theirs = other._options;
        if (theirs.ModeResolution.CompareTo(_options.ModeResolution) != 0 || theirs.ModeWidth != _options.ModeWidth || theirs.ModeDepth != _options.ModeDepth)
        {
            throw new ArgumentException("Cannot merge series sketches whose mode sketches are keyed or shaped differently.", nameof(other));
        }

        if (!other._grown)
        {
            if (other.Count == 0)
            {
                // An empty small sketch merges as nothing into every part, whichever form this one is in.
                return;
            }

            // Raw values can feed every part this sketch has, so nothing is lost.
            ReadOnlySpan<double> held = other.HeldValues;
            if (!_grown && TryHold(held))
            {
                _moments.Merge(other._moments);
                return;
            }

            Grow();
            _moments.Merge(other._moments);
            (double min, double max) = OrderKeys.RangeOf(held);
            _quantiles?.MergeUncompacted(held, min, max);
            _buckets?.AddUnchecked(held);
            _edges?.Add(held);
            _modes!.MergeExactEntries(ModeSketch.ExactEntriesOf(held, _options.ModeResolution));
            return;
        }

        // Read before growing: held values count between the other side's edges exactly.
        EdgeBucketSketch? edges = MergedEdges(other);
        Grow();
        _moments.Merge(other._moments);
        _quantiles = _quantiles is not null && other._quantiles is not null ? Merged(_quantiles, other._quantiles) : null;
        _buckets = _buckets is not null && other._buckets is not null ? Merged(_buckets, other._buckets) : null;
        _modes!.Merge(other._modes!);
        _edges = edges;
    }

    /// <summary>
    /// Turns this sketch into the compact form of an aged bucket: no KLL part (now or after growing)
    /// and no count-min table, so that what is left is moments, log buckets and mode counts while
    /// they are exact. Every answer then rests on the log buckets, whose bound is deterministic. A
    /// sketch without log buckets (written before they existed) keeps its parts, which are then its
    /// only quantile source; a small sketch keeps its values, which stay exact.
    /// </summary>
    public void Compact()
    {
        if (_grown && _buckets is null)
        {
            return;
        }

        bool changes = _keepsRank || _quantiles is not null || (_modes is not null && !_modes.IsExact && !_modes.IsContinuous);
        _keepsRank = false;
        if (_grown)
        {
            _quantiles = null;
            if (!_modes!.IsExact)
            {
                _modes.StopCounting();
            }
        }

        // Trimmed when the form changes; an already compact bucket that takes late values keeps its slack.
        if (changes)
        {
            TrimExcess();
        }
    }

    /// <summary>
    /// Gives back working space the parts keep while values arrive (see <see cref="KllSketch.TrimExcess"/>),
    /// for a sketch that is done growing. Answers and serialized form are unchanged.
    /// </summary>
    public void TrimExcess()
    {
        _quantiles?.TrimExcess();
        _buckets?.TrimExcess();
        if (_small is not null && _small.Length > Count)
        {
            Array.Resize(ref _small, (int)Count);
        }
    }

    /// <summary>Creates an independent copy in the same form.</summary>
    public SeriesSketch Clone()
    {
        var copy = new SeriesSketch(_moments.Clone(), _options, _seed)
        {
            _grown = _grown,
            _keepsRank = _keepsRank,
            _small = _grown || Count == 0 ? null : HeldValues.ToArray(),
            _quantiles = _quantiles?.Clone(),
            _buckets = _buckets?.Clone(),
            _modes = _modes?.Clone(),
            _edges = _edges?.Clone(),
        };
        return copy;
    }

    /// <summary>The whole descriptive summary with its bounds.</summary>
    public Summary Summarize(SummaryOptions? options = null)
    {
        (KllSketch? quantiles, LogBucketSketch? buckets, ModeSketch modes) = FullParts();
        return SummaryBuilder.Build(_moments, quantiles, buckets, modes, options ?? new SummaryOptions(), _edges);
    }

    /// <summary>
    /// The parts as the full form holds them; built afresh from the held values while small (a KLL
    /// part always, as it holds the values exactly), leaving this sketch as it is (for serializing
    /// and summarizing without growing).
    /// </summary>
    internal (KllSketch? Quantiles, LogBucketSketch? Buckets, ModeSketch Modes) FullParts()
    {
        if (_grown)
        {
            return (_quantiles, _buckets, _modes!);
        }

        var parts = EmptyParts(_options, _seed, withRank: true);
        ReadOnlySpan<double> held = HeldValues;
        parts.Quantiles!.AddUnchecked(held);
        parts.Buckets.AddUnchecked(held);
        parts.Modes.AddUnchecked(held);
        return parts;
    }

    /// <summary>
    /// Assembles a sketch from validated parts (see <c>SketchCodec</c>). Parts that a small sketch
    /// would serialize to — one never-compacted level, exact modes that count exactly those items —
    /// become a small sketch again, so a bucket read back from a snapshot is as small as it was. A
    /// KLL part that still holds every value also gives the log buckets, when none were written.
    /// </summary>
    internal static SeriesSketch FromParts(MomentSketch moments, KllSketch? quantiles, LogBucketSketch? buckets, ModeSketch modes, bool keepsRank, EdgeBucketSketch? edges = null)
    {
        if (edges is not null)
        {
            if (quantiles is not null || buckets is not null)
            {
                throw new ArgumentException("A sketch with edge buckets has neither a KLL part nor log buckets.", nameof(edges));
            }

            return new SeriesSketch(moments, OptionsOf(null, null, modes), 0) { _grown = true, _keepsRank = false, _modes = modes, _edges = edges };
        }

        SeriesSketchOptions options = OptionsOf(quantiles, buckets, modes);
        long count = moments.Count;
        ulong seed = quantiles?.RandomState ?? 0;
        if (quantiles is not null && count <= SmallLimitOf(options) && quantiles.LevelCount == 1 && quantiles.IsExact && modes.IsExact)
        {
            double[] items = quantiles.LevelValues(0);
            if (items.Length == count && ModeSketch.ExactEntriesOf(items, options.ModeResolution).AsSpan().SequenceEqual(modes.ExactEntries) && SameRange(items, quantiles))
            {
                return new SeriesSketch(moments, options, seed) { _small = count == 0 ? null : items, _keepsRank = keepsRank };
            }
        }

        if (buckets is null && quantiles is not null && quantiles.IsExact && quantiles.LevelCount == 1)
        {
            buckets = new LogBucketSketch(options.LogScale, options.LogMaxBuckets);
            buckets.AddUnchecked(quantiles.LevelValues(0));
        }

        return new SeriesSketch(moments, options, seed)
        {
            _grown = true,
            _keepsRank = keepsRank && quantiles is not null,
            _quantiles = quantiles,
            _buckets = buckets,
            _modes = modes,
        };
    }

    // The edge buckets of a merge where either side has them; null when neither has, or when a side
    // has nothing to count between edges (neither held values, edge buckets nor log buckets).
    private EdgeBucketSketch? MergedEdges(SeriesSketch other)
    {
        if (_edges is null && other._edges is null)
        {
            return null;
        }

        EdgeBucketSketch? mine = _edges ?? EdgesOf(this, other._edges!);
        EdgeBucketSketch? theirs = other._edges ?? EdgesOf(other, _edges!);
        if (mine is null || theirs is null)
        {
            return null;
        }

        mine.Merge(theirs);
        return mine;
    }

    // A sketch without edge buckets as edge buckets: its held values counted between the layout's
    // edges, or its log buckets with their own edges.
    private static EdgeBucketSketch? EdgesOf(SeriesSketch sketch, EdgeBucketSketch layout)
    {
        if (!sketch._grown)
        {
            EdgeBucketSketch counted = EdgeBucketSketch.EmptyLike(layout);
            counted.Add(sketch.HeldValues);
            return counted;
        }

        return sketch._buckets is null ? null : EdgeBucketSketch.OfLogBuckets(OccupiedLogBuckets.Of(sketch._buckets));
    }

    private ReadOnlySpan<double> HeldValues => _small is null ? default : _small.AsSpan(0, (int)_moments.Count);

    // Largest count a small sketch may hold: the full parts must stay exact and uncompacted up to
    // it (KLL compacts on the (k+1)-th value; the mode counter switches past its exact limit).
    private static int SmallLimitOf(SeriesSketchOptions options) =>
        Math.Min(SmallValueLimit, Math.Min(options.K, options.ModeExactLimit));

    private static (KllSketch? Quantiles, LogBucketSketch Buckets, ModeSketch Modes) EmptyParts(SeriesSketchOptions options, ulong seed, bool withRank) =>
        (withRank ? new KllSketch(options.K, seed) : null,
         new LogBucketSketch(options.LogScale, options.LogMaxBuckets),
         new ModeSketch(options.ModeResolution, options.ModeExactLimit, options.ModeWidth, options.ModeDepth, options.ModeCandidates));

    private static KllSketch Merged(KllSketch into, KllSketch other)
    {
        into.Merge(other);
        return into;
    }

    private static LogBucketSketch Merged(LogBucketSketch into, LogBucketSketch other)
    {
        into.Merge(other);
        return into;
    }

    private static SeriesSketchOptions OptionsOf(KllSketch? quantiles, LogBucketSketch? buckets, ModeSketch modes)
    {
        SeriesSketchOptions defaults = SeriesSketchOptions.Default;
        int k = quantiles?.K ?? defaults.K;
        int scale = buckets?.Scale ?? defaults.LogScale;
        int maxBuckets = buckets?.MaxBuckets ?? defaults.LogMaxBuckets;
        bool isDefault = k == defaults.K
            && scale == defaults.LogScale
            && maxBuckets == defaults.LogMaxBuckets
            && BitConverter.DoubleToInt64Bits(modes.Resolution) == BitConverter.DoubleToInt64Bits(defaults.ModeResolution)
            && modes.ExactLimit == defaults.ModeExactLimit
            && modes.Width == defaults.ModeWidth
            && modes.Depth == defaults.ModeDepth
            && modes.CandidateLimit == defaults.ModeCandidates;

        // Shared when default, so that buckets read back from disk do not each carry a settings object.
        return isDefault ? defaults : new SeriesSketchOptions
        {
            K = k,
            LogScale = scale,
            LogMaxBuckets = maxBuckets,
            ModeResolution = modes.Resolution,
            ModeExactLimit = modes.ExactLimit,
            ModeWidth = modes.Width,
            ModeDepth = modes.Depth,
            ModeCandidates = modes.CandidateLimit,
        };
    }

    // Extremes compared by bits: a rebuilt KLL part takes them from its items, so they must agree to the sign of zero.
    private static bool SameRange(ReadOnlySpan<double> items, KllSketch quantiles)
    {
        if (items.IsEmpty)
        {
            return true;
        }

        (double min, double max) = OrderKeys.RangeOf(items);
        return BitConverter.DoubleToInt64Bits(min) == BitConverter.DoubleToInt64Bits(quantiles.Min)
            && BitConverter.DoubleToInt64Bits(max) == BitConverter.DoubleToInt64Bits(quantiles.Max);
    }

    // Appends the values to the held ones if the sketch stays within its small limit; the buffer
    // grows to exactly what a first span needs, then doubles, never past the limit.
    private bool TryHold(ReadOnlySpan<double> values)
    {
        int held = (int)_moments.Count;
        int limit = SmallLimitOf(_options);
        if (values.Length > limit - held)
        {
            return false;
        }

        int needed = held + values.Length;
        if (_small is null || _small.Length < needed)
        {
            int grown = Math.Min(limit, Math.Max(needed, _small is null ? 0 : 2 * _small.Length));
            Array.Resize(ref _small, grown);
        }

        values.CopyTo(_small.AsSpan(held));
        return true;
    }

    // Feeds the held values, in arrival order, to fresh parts: with no compaction and exact mode
    // counts below the small limit, that is the state the parts would have reached value by value.
    private void Grow()
    {
        if (_grown)
        {
            return;
        }

        var parts = EmptyParts(_options, _seed, _keepsRank);
        ReadOnlySpan<double> held = HeldValues;
        parts.Quantiles?.AddUnchecked(held);
        parts.Buckets.AddUnchecked(held);
        parts.Modes.AddUnchecked(held);
        (_quantiles, _buckets, _modes) = parts;
        _small = null;
        _grown = true;
    }
}
