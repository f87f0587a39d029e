using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches;

/// <summary>
/// Everything kept about one series in one time bucket: moments, KLL quantiles and modes, fed
/// and merged together so that they always describe the same values.
/// </summary>
/// <remarks>
/// Most buckets of a quiet series hold a handful of values, for which the KLL and mode parts
/// would be exact lists of those values anyway. So a sketch starts small: moments plus the raw
/// values in arrival order (about 200 bytes for four values instead of about 850). It becomes the
/// full composite, by feeding the held values to fresh parts, once it would hold more than
/// <see cref="SmallValueLimit"/> values, when a full sketch is merged into it, or when
/// <see cref="Quantiles"/> or <see cref="Modes"/> is read. Below that limit the full parts would
/// never compact nor leave their exact mode counter, so every answer, merge and serialized byte is
/// the same in either form; the KLL coin is only seeded, never drawn, until the sketch is full.
/// </remarks>
public sealed class SeriesSketch
{
    /// <summary>Most values a sketch keeps raw before it becomes the full composite.</summary>
    public const int SmallValueLimit = 32;

    // Object header 16 B and six fields of 8 B; a moment sketch is a 16 B header and nine 8 B fields.
    private const long OwnBytes = 16 + (6 * 8);
    private const long MomentBytes = 16 + (9 * 8);
    private const long ArrayHeaderBytes = 24;

    private readonly MomentSketch _moments;
    private readonly SeriesSketchOptions _options;
    private readonly ulong _seed;
    private KllSketch? _quantiles;
    private ModeSketch? _modes;

    // The held values while small (length ≥ count, null while empty); null once full.
    private double[]? _small;

    /// <summary>Creates an empty sketch.</summary>
    /// <param name="options">Accuracy settings; defaults when null.</param>
    /// <param name="seed">Seed of the quantile sketch's random source; leave it out outside tests.</param>
    public SeriesSketch(SeriesSketchOptions? options = null, ulong? seed = null)
    {
        options ??= SeriesSketchOptions.Default;
        KllSketch.RequireK(options.K);
        ModeSketch.RequireSettings(options.ModeResolution, options.ModeExactLimit, options.ModeWidth, options.ModeDepth, options.ModeCandidates);
        _options = options;
        _moments = new MomentSketch();
        _seed = seed ?? (ulong)Random.Shared.NextInt64();
        if (SmallLimitOf(options) == 0)
        {
            Grow();
        }
    }

    private SeriesSketch(MomentSketch moments, SeriesSketchOptions options, ulong seed, KllSketch? quantiles, ModeSketch? modes, double[]? small)
    {
        _moments = moments;
        _options = options;
        _seed = seed;
        _quantiles = quantiles;
        _modes = modes;
        _small = small;
    }

    /// <summary>Accuracy settings this sketch was made with (or read back with).</summary>
    public SeriesSketchOptions Options => _options;

    /// <summary>Count, extremes, sum, mean and central moments.</summary>
    public MomentSketch Moments => _moments;

    /// <summary>Quantiles, ranks, MAD and histograms. Reading it turns a small sketch into its full form.</summary>
    public KllSketch Quantiles
    {
        get
        {
            Grow();
            return _quantiles!;
        }
    }

    /// <summary>Most frequent values. Reading it turns a small sketch into its full form.</summary>
    public ModeSketch Modes
    {
        get
        {
            Grow();
            return _modes!;
        }
    }

    /// <summary>True while the sketch keeps its values raw rather than in the full KLL and mode parts.</summary>
    public bool IsSmall => _quantiles is null;

    /// <summary>Number of values folded in.</summary>
    public long Count => _moments.Count;

    /// <summary>Approximate heap bytes of the whole composite: this object, the moments, and either the held values or the two full parts.</summary>
    public long EstimatedBytes => _quantiles is null
        ? OwnBytes + MomentBytes + (_small is null ? 0 : ArrayHeaderBytes + (8L * _small.Length))
        : OwnBytes + MomentBytes + _quantiles.EstimatedBytes + _modes!.EstimatedBytes;

    /// <summary>Folds in one finite value.</summary>
    public void Add(double value)
    {
        FiniteValues.Require(value);
        if (_quantiles is null)
        {
            if (TryHold([value]))
            {
                _moments.AddUnchecked(value);
                return;
            }

            Grow();
        }

        _moments.AddUnchecked(value);
        _quantiles!.AddUnchecked(value);
        _modes!.AddUnchecked(value);
    }

    /// <summary>Folds in a span of finite values; a span holding a NaN or infinity is rejected whole and changes nothing.</summary>
    public void Add(ReadOnlySpan<double> values)
    {
        FiniteValues.Require(values);
        if (_quantiles is null)
        {
            if (TryHold(values))
            {
                _moments.AddUnchecked(values);
                return;
            }

            Grow();
        }

        _moments.AddUnchecked(values);
        _quantiles!.AddUnchecked(values);
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

        if (other._quantiles is null)
        {
            if (other.Count == 0)
            {
                // An empty small sketch merges as nothing into every part, whichever form this one is in.
                return;
            }

            ReadOnlySpan<double> held = other.HeldValues;
            if (_quantiles is null && TryHold(held))
            {
                _moments.Merge(other._moments);
                return;
            }

            Grow();
            _moments.Merge(other._moments);
            (double min, double max) = OrderKeys.RangeOf(held);
            _quantiles!.MergeUncompacted(held, min, max);
            _modes!.MergeExactEntries(ModeSketch.ExactEntriesOf(held, _options.ModeResolution));
            return;
        }

        Grow();
        _moments.Merge(other._moments);
        _quantiles!.Merge(other._quantiles);
        _modes!.Merge(other._modes!);
    }

    /// <summary>
    /// Gives back working space the parts keep while values arrive (see <see cref="KllSketch.TrimExcess"/>),
    /// for a sketch that is done growing. Answers and serialized form are unchanged.
    /// </summary>
    public void TrimExcess() => _quantiles?.TrimExcess();

    /// <summary>Creates an independent copy in the same form.</summary>
    public SeriesSketch Clone() => _quantiles is null
        ? new(_moments.Clone(), _options, _seed, null, null, Count == 0 ? null : HeldValues.ToArray())
        : new(_moments.Clone(), _options, _seed, _quantiles.Clone(), _modes!.Clone(), null);

    /// <summary>The whole descriptive summary with its bounds.</summary>
    public Summary Summarize(SummaryOptions? options = null)
    {
        (KllSketch quantiles, ModeSketch modes) = FullParts();
        return SummaryBuilder.Build(_moments, quantiles, modes, options ?? new SummaryOptions());
    }

    /// <summary>
    /// The KLL and mode parts as the full form holds them; built afresh from the held values while
    /// small, leaving this sketch as it is (for serializing and summarizing without growing).
    /// </summary>
    internal (KllSketch Quantiles, ModeSketch Modes) FullParts()
    {
        if (_quantiles is not null)
        {
            return (_quantiles, _modes!);
        }

        (KllSketch quantiles, ModeSketch modes) = EmptyParts(_options, _seed);
        ReadOnlySpan<double> held = HeldValues;
        quantiles.AddUnchecked(held);
        modes.AddUnchecked(held);
        return (quantiles, modes);
    }

    /// <summary>
    /// Assembles a sketch from validated parts (see <c>SketchCodec</c>). Parts that a small sketch
    /// would serialize to — one never-compacted level, exact modes that count exactly those items —
    /// become a small sketch again, so a bucket read back from a snapshot is as small as it was.
    /// </summary>
    internal static SeriesSketch FromParts(MomentSketch moments, KllSketch quantiles, ModeSketch modes)
    {
        SeriesSketchOptions options = OptionsOf(quantiles, modes);
        long count = moments.Count;
        if (count <= SmallLimitOf(options) && quantiles.LevelCount == 1 && quantiles.IsExact && modes.IsExact)
        {
            double[] items = quantiles.LevelValues(0);
            if (items.Length == count && ModeSketch.ExactEntriesOf(items, options.ModeResolution).AsSpan().SequenceEqual(modes.ExactEntries) && SameRange(items, quantiles))
            {
                return new SeriesSketch(moments, options, quantiles.RandomState, null, null, count == 0 ? null : items);
            }
        }

        return new SeriesSketch(moments, options, quantiles.RandomState, quantiles, modes, null);
    }

    private ReadOnlySpan<double> HeldValues => _small is null ? default : _small.AsSpan(0, (int)_moments.Count);

    // Largest count a small sketch may hold: the full parts must stay exact and uncompacted up to
    // it (KLL compacts on the (k+1)-th value; the mode counter switches past its exact limit).
    private static int SmallLimitOf(SeriesSketchOptions options) =>
        Math.Min(SmallValueLimit, Math.Min(options.K, options.ModeExactLimit));

    private static (KllSketch Quantiles, ModeSketch Modes) EmptyParts(SeriesSketchOptions options, ulong seed) =>
        (new KllSketch(options.K, seed), new ModeSketch(options.ModeResolution, options.ModeExactLimit, options.ModeWidth, options.ModeDepth, options.ModeCandidates));

    private static SeriesSketchOptions OptionsOf(KllSketch quantiles, ModeSketch modes)
    {
        SeriesSketchOptions defaults = SeriesSketchOptions.Default;
        bool isDefault = quantiles.K == defaults.K
            && BitConverter.DoubleToInt64Bits(modes.Resolution) == BitConverter.DoubleToInt64Bits(defaults.ModeResolution)
            && modes.ExactLimit == defaults.ModeExactLimit
            && modes.Width == defaults.ModeWidth
            && modes.Depth == defaults.ModeDepth
            && modes.CandidateLimit == defaults.ModeCandidates;

        // Shared when default, so that buckets read back from disk do not each carry a settings object.
        return isDefault ? defaults : new SeriesSketchOptions
        {
            K = quantiles.K,
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
        if (_quantiles is not null)
        {
            return;
        }

        (_quantiles, _modes) = FullParts();
        _small = null;
    }
}
