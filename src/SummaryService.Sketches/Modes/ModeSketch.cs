namespace SummaryService.Sketches.Modes;

/// <summary>
/// Most frequent values of a stream: exact counts while distinct keys are few, then — for discrete
/// data — a count-min table with conservative update plus a small set of tracked candidate keys.
/// </summary>
/// <remarks>
/// <para>Values are keyed by their exact bits, or by bins of width <see cref="Resolution"/> so that
/// continuous measurements can have a mode. Nothing is allocated up front: the exact counter
/// starts at a few slots and the count-min table appears only when the distinct keys exceed
/// <see cref="ExactLimit"/>.</para>
/// <para>Data is discrete when values are keyed by a resolution or every counted value is an
/// integer. When the exact counter overflows on data that is not — a non-integral value among
/// the keys — the values are continuous: a most frequent exact value means nothing there, so the
/// sketch stops counting keys altogether (<see cref="IsContinuous"/>) and the modes come from the
/// density of the log buckets instead. Merging with a continuous sketch makes a continuous one.</para>
/// </remarks>
public sealed class ModeSketch
{
    /// <summary>
    /// Distinct keys counted exactly before switching to the count-min form: above the default KLL k,
    /// so that a bucket whose quantiles are still exact has exact modes too.
    /// </summary>
    public const int DefaultExactLimit = 256;

    /// <summary>Count-min width: ε = e/136 ≈ 2% of the values counted.</summary>
    public const int DefaultWidth = 136;

    /// <summary>Count-min depth: δ = e^−5 ≈ 0.7% per key.</summary>
    public const int DefaultDepth = 5;

    /// <summary>Candidate keys tracked in the count-min form.</summary>
    public const int DefaultCandidateLimit = 32;

    private ExactCounter? _exact = new();
    private CountMinTable? _table;
    private CandidateHeap _candidates;
    private bool _continuous;

    /// <summary>Creates an empty sketch.</summary>
    /// <param name="resolution">Bin width used to key values; 0 keys values by their exact bits.</param>
    /// <param name="exactLimit">Distinct keys counted exactly before switching to count-min.</param>
    /// <param name="width">Count-min width w = ⌈e/ε⌉.</param>
    /// <param name="depth">Count-min depth d = ⌈ln(1/δ)⌉.</param>
    /// <param name="candidateLimit">Candidate keys tracked once in count-min form.</param>
    public ModeSketch(double resolution = 0, int exactLimit = DefaultExactLimit, int width = DefaultWidth, int depth = DefaultDepth, int candidateLimit = DefaultCandidateLimit)
    {
        RequireSettings(resolution, exactLimit, width, depth, candidateLimit);
        Resolution = resolution;
        ExactLimit = exactLimit;
        Width = width;
        Depth = depth;
        CandidateLimit = candidateLimit;
        _candidates = new CandidateHeap(candidateLimit);
    }

    /// <summary>Bin width used to key values; 0 keys values by their exact bits.</summary>
    public double Resolution { get; }

    /// <summary>Rejects the settings the constructor rejects, with the same exceptions.</summary>
    internal static void RequireSettings(double resolution, int exactLimit, int width, int depth, int candidateLimit)
    {
        if (!(resolution >= 0) || !double.IsFinite(resolution))
        {
            throw new ArgumentOutOfRangeException(nameof(resolution), resolution, "Resolution must be 0 (exact values) or a positive finite bin width.");
        }

        ArgumentOutOfRangeException.ThrowIfNegative(exactLimit);
        ArgumentOutOfRangeException.ThrowIfLessThan(width, 2);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(width, 1 << 20);
        ArgumentOutOfRangeException.ThrowIfLessThan(depth, 1);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(depth, 32);
        ArgumentOutOfRangeException.ThrowIfLessThan(candidateLimit, 1);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(candidateLimit, 4096);
    }

    /// <summary>Distinct keys counted exactly before switching to count-min.</summary>
    public int ExactLimit { get; }

    /// <summary>Count-min width.</summary>
    public int Width { get; }

    /// <summary>Count-min depth.</summary>
    public int Depth { get; }

    /// <summary>Candidate keys tracked in count-min form.</summary>
    public int CandidateLimit { get; }

    /// <summary>Number of values counted.</summary>
    public long Count { get; private set; }

    /// <summary>True while every count is exact.</summary>
    public bool IsExact => _exact is not null;

    /// <summary>True once the data showed itself continuous: no keys are counted any more.</summary>
    public bool IsContinuous => _continuous;

    /// <summary>Largest over-count of any one estimate, at probability 1 − e^−d: ⌈εN⌉, or 0 while exact.</summary>
    public long MaxOverCount => _table is null ? 0 : (long)Math.Ceiling(_table.Epsilon * Count);

    /// <summary>Probability that one key's estimate over-counts by more than <see cref="MaxOverCount"/>.</summary>
    public double FailureProbability => _table?.FailureProbability ?? 0;

    /// <summary>Approximate heap bytes: object, exact counter or count-min table, candidates.</summary>
    public long EstimatedBytes =>
        96 + (_exact?.EstimatedBytes ?? 0) + (_table is null ? 0 : 48 + (8L * _table.Counters.Length)) + _candidates.EstimatedBytes;

    /// <summary>Counts one finite value.</summary>
    public void Add(double value)
    {
        FiniteValues.Require(value);
        AddUnchecked(value);
    }

    /// <summary>Counts a span of finite values; a span with a NaN or infinity is rejected whole.</summary>
    public void Add(ReadOnlySpan<double> values)
    {
        FiniteValues.Require(values);
        AddUnchecked(values);
    }

    internal void AddUnchecked(double value) => AddKey(ModeKey.Of(value, Resolution), 1);

    internal void AddUnchecked(ReadOnlySpan<double> values)
    {
        double resolution = Resolution;
        int next = 0;
        while (_exact is not null && next < values.Length)
        {
            AddKey(ModeKey.Of(values[next++], resolution), 1);
        }

        if (next < values.Length)
        {
            if (_continuous)
            {
                Count += values.Length - next;
            }
            else
            {
                AddToTable(values[next..]);
            }
        }
    }

    // The same updates in the same order as one AddKey per value, so the table and the candidates
    // end up exactly as they would; only the hashing of each chunk is done ahead of its updates.
    private void AddToTable(ReadOnlySpan<double> values)
    {
        const int Chunk = 64;
        int depth = Depth;
        double resolution = Resolution;
        CountMinTable table = _table!;
        Span<long> keys = stackalloc long[Chunk];
        Span<int> cells = stackalloc int[Chunk * depth];
        for (int start = 0; start < values.Length; start += Chunk)
        {
            ReadOnlySpan<double> chunk = values.Slice(start, Math.Min(Chunk, values.Length - start));
            int n = chunk.Length;
            ModeKey.Of(chunk, resolution, keys[..n]);

            ReadOnlySpan<int> chunkCells = cells[..(n * depth)];
            table.FillCells(keys[..n], cells);
            int stopped = -1;
            while ((stopped = table.AddUntilAbove(chunkCells, stopped + 1, n, _candidates.Threshold, out long estimate)) < n)
            {
                _candidates.Track(keys[stopped], estimate);
            }

            Count += n;
        }
    }

    /// <summary>Merges another sketch with the same keying and table shape into this one.</summary>
    public void Merge(ModeSketch other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (ReferenceEquals(other, this))
        {
            other = Clone();
        }

        if (other.Resolution.CompareTo(Resolution) != 0 || other.Width != Width || other.Depth != Depth)
        {
            throw new ArgumentException($"Cannot merge mode sketches keyed or shaped differently (resolution {Resolution} vs {other.Resolution}, table {Width}x{Depth} vs {other.Width}x{other.Depth}).", nameof(other));
        }

        if (other._continuous || _continuous)
        {
            StopCounting();
            Count += other.Count;
            return;
        }

        if (other._exact is not null)
        {
            MergeExactEntries(other._exact.SortedEntries());
            return;
        }

        if (_table is null)
        {
            SwitchToTable();
        }

        _table!.AddTable(other._table!);
        Count += other.Count;
        var keys = new long[_candidates.Count + other._candidates.Count];
        _candidates.Keys.CopyTo(keys);
        other._candidates.Keys.CopyTo(keys.AsSpan(_candidates.Count));
        RebuildCandidates(keys);
    }

    /// <summary>
    /// Merges exact counts in ascending key order, as <see cref="Merge"/> merges an exact sketch:
    /// the order fixes which keys a count-min form keeps as candidates.
    /// </summary>
    internal void MergeExactEntries(ReadOnlySpan<(long Key, long Count)> entries)
    {
        foreach ((long key, long count) in entries)
        {
            AddKey(key, count);
        }
    }

    /// <summary>
    /// The exact counts of <paramref name="values"/> keyed at <paramref name="resolution"/>, in
    /// ascending key order: what an exact sketch of those values lists as its entries.
    /// </summary>
    internal static (long Key, long Count)[] ExactEntriesOf(ReadOnlySpan<double> values, double resolution)
    {
        var counter = new ExactCounter();
        foreach (double value in values)
        {
            counter.Add(ModeKey.Of(value, resolution), 1);
        }

        return counter.SortedEntries();
    }

    /// <summary>
    /// Every value that could be the most frequent, most frequent first: each reported value's
    /// count interval reaches the highest lower bound among all candidates. Exact ties are all listed.
    /// </summary>
    public ModeEstimate[] Modes(int maxModes) => Modes(maxModes, out _);

    /// <summary>As <see cref="Modes(int)"/>, also giving how many values could be the mode before the limit.</summary>
    public ModeEstimate[] Modes(int maxModes, out int possibleModes)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(maxModes, 0);
        if (_continuous)
        {
            possibleModes = 0;
            return [];
        }

        var all = Estimates();
        if (all.Count == 0)
        {
            possibleModes = 0;
            return [];
        }

        long floor = all.Max(e => e.CountLow);
        var possible = all.Where(e => e.CountHigh >= floor).ToList();
        possibleModes = possible.Count;
        return possible
            .OrderByDescending(e => e.Count)
            .ThenBy(e => e.Value)
            .Take(maxModes)
            .ToArray();
    }

    /// <summary>Number of values that could be the mode, before any limit is applied.</summary>
    public int ModeCandidateCount()
    {
        Modes(0, out int possible);
        return possible;
    }

    /// <summary>Estimated count of one value's key with its interval.</summary>
    public ModeEstimate Estimate(double value)
    {
        long key = ModeKey.Of(value, Resolution);
        return EstimateOf(key);
    }

    /// <summary>Creates an independent copy.</summary>
    public ModeSketch Clone()
    {
        var copy = (ModeSketch)MemberwiseClone();
        copy._exact = _exact?.Clone();
        copy._table = _table?.Clone();
        copy._candidates = _candidates.Clone();
        return copy;
    }

    internal (long Key, long Count)[]? ExactEntries => _exact?.SortedEntries();

    internal ReadOnlySpan<long> TableCounters => _table is null ? default : _table.Counters;

    /// <summary>Candidates with the counts they were last tracked at, in ascending key order.</summary>
    internal (long Key, long Count)[] SortedCandidates() => _candidates.SortedByKey();

    internal long TableEstimate(long key) => _table!.Estimate(key);

    /// <summary>Rebuilds a sketch from validated parts (see <c>SketchCodec</c>).</summary>
    internal static ModeSketch Restore(ModeSketch empty, long count, (long Key, long Count)[]? exact, long[]? counters, (long Key, long Count)[] candidates)
    {
        if (exact is null && counters is null)
        {
            empty.StopCounting();
            empty.Count = count;
            return empty;
        }

        if (exact is not null)
        {
            foreach ((long key, long c) in exact)
            {
                empty._exact!.Add(key, c);
            }

            empty.Count = count;
            return empty;
        }

        empty._exact = null;
        empty._table = new CountMinTable(empty.Width, empty.Depth, counters!);
        empty.Count = count;
        empty._candidates.Reset(candidates);
        return empty;
    }

    private void AddKey(long key, long count)
    {
        Count += count;
        if (_exact is not null)
        {
            _exact.Add(key, count);
            if (_exact.Distinct > ExactLimit)
            {
                LeaveExactCounting();
            }

            return;
        }

        if (_continuous)
        {
            return;
        }

        long estimate = _table!.Add(key, count);
        if (_candidates.Wants(estimate))
        {
            _candidates.Track(key, estimate);
        }
    }

    /// <summary>
    /// Drops every count and stops counting: the form of continuous data, and the compact form of an
    /// aged bucket, whose modes come from the log buckets' density instead.
    /// </summary>
    internal void StopCounting()
    {
        _exact = null;
        _table = null;
        _candidates = new CandidateHeap(CandidateLimit);
        _continuous = true;
    }

    // Past the exact limit: discrete data goes on in the count-min form, continuous data stops.
    private void LeaveExactCounting()
    {
        bool discrete = Resolution > 0;
        if (!discrete)
        {
            discrete = true;
            foreach ((long key, _) in _exact!.SortedEntries())
            {
                double value = ModeKey.ValueOf(key);
                if (value != Math.Floor(value))
                {
                    discrete = false;
                    break;
                }
            }
        }

        if (discrete)
        {
            SwitchToTable();
        }
        else
        {
            StopCounting();
        }
    }

    private void SwitchToTable()
    {
        var entries = _exact!.SortedEntries();
        _exact = null;
        _table = new CountMinTable(Width, Depth);
        foreach ((long key, long count) in entries)
        {
            _table.Add(key, count);
        }

        RebuildCandidates(entries.Select(e => e.Key).ToArray());
    }

    // Candidates are re-estimated against the table and the strongest kept; ties go to the smaller key
    // so that the outcome does not depend on the order the keys arrive in. Duplicates collapse.
    private void RebuildCandidates(long[] keys)
    {
        Array.Sort(keys);
        int distinct = 0;
        for (int i = 0; i < keys.Length; i++)
        {
            if (i == 0 || keys[i] != keys[i - 1])
            {
                keys[distinct++] = keys[i];
            }
        }

        var ranked = new (long Count, long Key)[distinct];
        for (int i = 0; i < distinct; i++)
        {
            ranked[i] = (-_table!.Estimate(keys[i]), keys[i]);
        }

        Array.Sort(ranked);
        var kept = new (long Key, long Count)[Math.Min(CandidateLimit, distinct)];
        for (int i = 0; i < kept.Length; i++)
        {
            kept[i] = (ranked[i].Key, -ranked[i].Count);
        }

        _candidates.Reset(kept);
    }

    private List<ModeEstimate> Estimates()
    {
        if (_exact is not null)
        {
            return _exact.SortedEntries()
                .Select(e => WithPlace(new ModeEstimate(ModeKey.ValueOf(e.Key), e.Count, e.Count, e.Count)))
                .ToList();
        }

        var list = new List<ModeEstimate>(_candidates.Count);
        foreach (long key in _candidates.Keys)
        {
            list.Add(EstimateOf(key));
        }

        return list;
    }

    private ModeEstimate EstimateOf(long key)
    {
        if (_exact is not null)
        {
            long exact = _exact.CountOf(key);
            return WithPlace(new ModeEstimate(ModeKey.ValueOf(key), exact, exact, exact));
        }

        if (_table is null)
        {
            return WithPlace(new ModeEstimate(ModeKey.ValueOf(key), 0, 0, Count));
        }

        long estimate = _table.Estimate(key);
        return WithPlace(new ModeEstimate(ModeKey.ValueOf(key), estimate, Math.Max(0, estimate - MaxOverCount), estimate));
    }

    // An exact value lies where it is; its share is of all values counted.
    private ModeEstimate WithPlace(ModeEstimate mode) =>
        mode with { Kind = ModeKind.ExactValue, Low = mode.Value, High = mode.Value, Share = Count == 0 ? 0 : (double)mode.Count / Count };
}
