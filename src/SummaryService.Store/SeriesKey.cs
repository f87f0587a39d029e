using System.IO.Hashing;
using System.Text;
using SummaryService.Readable;

namespace SummaryService.Store;

/// <summary>
/// Identity of a series: metric name plus labels sorted by name (ordinal), so that the same labels
/// in any order name the same series. <see cref="Canonical"/> is what is hashed and ordered by;
/// <see cref="ToString"/> is the display form people read in messages and logs.
/// </summary>
public sealed class SeriesKey : IEquatable<SeriesKey>
{
    private readonly KeyValuePair<string, string>[] _labels;

    /// <summary>Creates a key; labels are copied and sorted.</summary>
    public SeriesKey(string metric, IEnumerable<KeyValuePair<string, string>>? labels = null)
    {
        ArgumentNullException.ThrowIfNull(metric);
        Metric = metric;
        _labels = (labels ?? []).OrderBy(l => l.Key, StringComparer.Ordinal).ToArray();
        Canonical = BuildCanonical(metric, _labels);
        Hash = XxHash64.HashToUInt64(Encoding.UTF8.GetBytes(Canonical));
    }

    /// <summary>Metric name.</summary>
    public string Metric { get; }

    /// <summary>Labels sorted by name.</summary>
    public IReadOnlyList<KeyValuePair<string, string>> Labels => _labels;

    /// <summary>One string that names the series unambiguously (names and values escaped).</summary>
    public string Canonical { get; }

    /// <summary>Stable 64-bit hash of <see cref="Canonical"/> (XXH64, seed 0): the same on every run and machine.</summary>
    public ulong Hash { get; }

    /// <summary>The label's value, or null when the series has no such label.</summary>
    public string? Label(string name)
    {
        foreach (var label in _labels)
        {
            if (string.Equals(label.Key, name, StringComparison.Ordinal))
            {
                return label.Value;
            }
        }

        return null;
    }

    /// <summary>True when every listed label is present with exactly that value.</summary>
    public bool Matches(IReadOnlyDictionary<string, string> required)
    {
        foreach (var (name, value) in required)
        {
            if (!string.Equals(Label(name), value, StringComparison.Ordinal))
            {
                return false;
            }
        }

        return true;
    }

    /// <inheritdoc/>
    public bool Equals(SeriesKey? other) => other is not null && Hash == other.Hash && string.Equals(Canonical, other.Canonical, StringComparison.Ordinal);

    /// <inheritdoc/>
    public override bool Equals(object? obj) => Equals(obj as SeriesKey);

    /// <inheritdoc/>
    public override int GetHashCode() => (int)Hash;

    /// <summary>The display form (<c>metric · name=value · …</c>, see <see cref="SeriesName"/>); never hashed or parsed.</summary>
    public override string ToString() => SeriesName.Of(Metric, _labels);

    private static string BuildCanonical(string metric, KeyValuePair<string, string>[] labels)
    {
        var builder = new StringBuilder(metric.Length + (labels.Length * 16));
        Escape(builder, metric);
        builder.Append('{');
        for (int i = 0; i < labels.Length; i++)
        {
            if (i > 0)
            {
                builder.Append(',');
            }

            Escape(builder, labels[i].Key);
            builder.Append('=');
            Escape(builder, labels[i].Value);
        }

        return builder.Append('}').ToString();
    }

    private static void Escape(StringBuilder builder, string text)
    {
        foreach (char c in text)
        {
            if (c is '\\' or '{' or '}' or ',' or '=')
            {
                builder.Append('\\');
            }

            builder.Append(c);
        }
    }
}
