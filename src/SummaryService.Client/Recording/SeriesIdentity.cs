namespace SummaryService.Client.Recording;

/// <summary>
/// A series' metric and labels, labels sorted by name so that the same set in any order is one series.
/// The hash ignores label order, so a lookup from an unsorted span needs no sorting and no allocation.
/// </summary>
internal sealed class SeriesIdentity
{
    private SeriesIdentity(string metric, (string Name, string Value)[] labels, int hash)
    {
        Metric = metric;
        Labels = labels;
        Hash = hash;
    }

    public string Metric { get; }

    /// <summary>Sorted by name (ordinal), names unique.</summary>
    public (string Name, string Value)[] Labels { get; }

    public int Hash { get; }

    /// <summary>Copies and checks the labels; a repeated name is refused, since a series has one value per label.</summary>
    public static SeriesIdentity Create(SeriesLookup lookup)
    {
        ArgumentException.ThrowIfNullOrEmpty(lookup.Metric, "metric");
        var labels = lookup.Labels.ToArray();
        foreach (var (name, value) in labels)
        {
            ArgumentException.ThrowIfNullOrEmpty(name, "labels");
            ArgumentNullException.ThrowIfNull(value, "labels");
        }

        Array.Sort(labels, static (x, y) => string.CompareOrdinal(x.Name, y.Name));
        for (int i = 1; i < labels.Length; i++)
        {
            if (labels[i].Name == labels[i - 1].Name)
            {
                throw new ArgumentException($"label '{labels[i].Name}' is given twice for metric '{lookup.Metric}'; a series has one value per label.", "labels");
            }
        }

        return new SeriesIdentity(lookup.Metric, labels, HashOf(lookup));
    }

    /// <summary>Metric hash combined with an order-independent sum of per-label hashes.</summary>
    public static int HashOf(SeriesLookup lookup)
    {
        int sum = 0;
        foreach (var (name, value) in lookup.Labels)
        {
            unchecked
            {
                sum += HashCode.Combine(name, value);
            }
        }

        return HashCode.Combine(lookup.Metric, sum, lookup.Labels.Length);
    }

    /// <summary>
    /// True when the lookup names this series. Every stored label must appear in the lookup and the counts
    /// must agree; since stored names are unique, a lookup repeating a name can never match.
    /// </summary>
    public bool Matches(SeriesLookup lookup)
    {
        if (lookup.Labels.Length != Labels.Length || !string.Equals(lookup.Metric, Metric, StringComparison.Ordinal))
        {
            return false;
        }

        foreach (var (name, value) in Labels)
        {
            if (!Contains(lookup.Labels, name, value))
            {
                return false;
            }
        }

        return true;
    }

    private static bool Contains(ReadOnlySpan<(string Name, string Value)> labels, string name, string value)
    {
        foreach (var label in labels)
        {
            if (string.Equals(label.Name, name, StringComparison.Ordinal))
            {
                return string.Equals(label.Value, value, StringComparison.Ordinal);
            }
        }

        return false;
    }
}

/// <summary>The caller's metric and labels as given, looked up without copying.</summary>
internal readonly ref struct SeriesLookup(string metric, ReadOnlySpan<(string Name, string Value)> labels)
{
    public string Metric { get; } = metric;

    public ReadOnlySpan<(string Name, string Value)> Labels { get; } = labels;
}

/// <summary>Equality of identities, and of a lookup against an identity, for the recorder's series cache.</summary>
internal sealed class SeriesIdentityComparer : IEqualityComparer<SeriesIdentity>, IAlternateEqualityComparer<SeriesLookup, SeriesIdentity>
{
    public bool Equals(SeriesIdentity? x, SeriesIdentity? y) =>
        ReferenceEquals(x, y) || (x is not null && y is not null && x.Hash == y.Hash && x.Matches(new SeriesLookup(y.Metric, y.Labels)));

    public int GetHashCode(SeriesIdentity obj) => obj.Hash;

    public bool Equals(SeriesLookup alternate, SeriesIdentity other) => other.Matches(alternate);

    public int GetHashCode(SeriesLookup alternate) => SeriesIdentity.HashOf(alternate);

    public SeriesIdentity Create(SeriesLookup alternate) => SeriesIdentity.Create(alternate);
}
