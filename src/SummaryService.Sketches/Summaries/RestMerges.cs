namespace SummaryService.Sketches.Summaries;

/// <summary>
/// For every group, the merge of all the others ("the rest") without quadratic work: with prefix
/// merges P_i = S ⊕ g_0 ⊕ … ⊕ g_i (S the values every rest holds, e.g. series without the split
/// label) and suffix merges X_i = g_i ⊕ … ⊕ g_(n−1), rest_i = P_(i−1) ⊕ X_(i+1). That is about 3n
/// merges in all, and each rest counts exactly the values of the other groups once.
/// </summary>
/// <remarks>
/// KLL merges compact with random coins. Every sketch made here is seeded from an identity — the
/// prefix and suffix chains from fixed salts, each rest from its group's key — so the same groups
/// give the same rests bit for bit, and an answer can be reproduced. A chain's coins form one
/// stream, as any sketch's do, which is all the rank bound of each rest needs.
/// </remarks>
internal static class RestMerges
{
    private const ulong PrefixSalt = 0x5EED_0F_9EF1_0001;
    private const ulong SuffixSalt = 0x5EED_0F_5FF1_0002;

    /// <summary>
    /// Calls <paramref name="visit"/> with each group's index and its rest, in group order. The rest
    /// is a fresh sketch the visitor may keep; the groups and <paramref name="shared"/> are not changed.
    /// </summary>
    public static void ForEach(IReadOnlyList<SeriesSketch> groups, IReadOnlyList<ulong> keys, SeriesSketch? shared, Action<int, SeriesSketch> visit)
    {
        ArgumentNullException.ThrowIfNull(groups);
        ArgumentNullException.ThrowIfNull(keys);
        ArgumentNullException.ThrowIfNull(visit);
        if (groups.Count == 0)
        {
            return;
        }

        SeriesSketchOptions options = groups[0].Options;

        // X_i for i ≥ 1, built from the end; X_n is absent.
        var suffixes = new SeriesSketch?[groups.Count + 1];
        for (int i = groups.Count - 1; i >= 1; i--)
        {
            SeriesSketch suffix = suffixes[i + 1]?.Clone() ?? new SeriesSketch(options, SuffixSalt);
            suffix.Merge(groups[i]);
            suffixes[i] = suffix;
        }

        var prefix = new SeriesSketch(options, PrefixSalt);
        if (shared is not null)
        {
            prefix.Merge(shared);
        }

        for (int i = 0; i < groups.Count; i++)
        {
            var rest = new SeriesSketch(options, SplitMix64.Mix(keys[i] ^ PrefixSalt ^ SuffixSalt));
            rest.Merge(prefix);
            if (suffixes[i + 1] is { } after)
            {
                rest.Merge(after);
                suffixes[i + 1] = null; // no longer needed: memory falls as the walk goes on
            }

            visit(i, rest);
            prefix.Merge(groups[i]);
        }
    }

    /// <summary>A 64-bit key of a string that is the same in every process (FNV-1a over UTF-16 units, then mixed).</summary>
    public static ulong KeyOf(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        ulong hash = 0xCBF29CE484222325UL;
        foreach (char c in text)
        {
            hash = (hash ^ c) * 0x100000001B3UL;
        }

        return SplitMix64.Mix(hash);
    }
}
