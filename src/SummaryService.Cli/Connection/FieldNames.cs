using System.Globalization;
using System.Text.RegularExpressions;

namespace SummaryService.Cli.Connection;

/// <summary>
/// The server names request fields (<c>rank_of[0]</c>, <c>histogram.bin_count</c>, <c>interval</c>);
/// a person typed options (<c>--share-below</c>, <c>--bins</c>, <c>--every</c>). Each command lists
/// how its options map onto fields, and a refusal is shown in the command's own words.
/// </summary>
/// <remarks>
/// A field is written without its index (<c>rank_of</c>); the wording may use <c>{n}</c> for a
/// list index counted from 1 and <c>{key}</c> for a map key (<c>labels[region]</c> → <c>--label region</c>).
/// Every occurrence of the refused field's name in the message is replaced, so a message that names
/// two entries of one list (<c>group_by[1] repeats group_by[0]</c>) reads right too. Durations and
/// times need no translation: the server already writes them in the tool's syntax.
/// </remarks>
public sealed partial class FieldNames
{
    private readonly Dictionary<string, string> _words;

    /// <summary>Creates the table from (field, wording) pairs.</summary>
    public FieldNames(params (string Field, string Words)[] names)
    {
        ArgumentNullException.ThrowIfNull(names);
        _words = names.ToDictionary(n => n.Field, n => n.Words, StringComparer.Ordinal);
    }

    /// <summary>No translation: messages are shown as the server wrote them.</summary>
    public static FieldNames None { get; } = new();

    /// <summary>A table holding these entries and then <paramref name="more"/>.</summary>
    public FieldNames With(params (string Field, string Words)[] more) =>
        new([.. _words.Select(w => (w.Key, w.Value)), .. more]);

    /// <summary>
    /// <paramref name="message"/> with the refused <paramref name="field"/> (from the server's
    /// <c>summary-field</c> trailer) written as the command line says it; unchanged when the command
    /// has no word for it.
    /// </summary>
    public string Translate(string message, string? field)
    {
        ArgumentNullException.ThrowIfNull(message);
        if (string.IsNullOrEmpty(field))
        {
            return message;
        }

        string path = IndexPattern().Replace(field, "");
        if (!_words.TryGetValue(path, out string? words))
        {
            return message;
        }

        var occurrence = new Regex(@"(?<![\w.\[])" + Regex.Escape(path) + @"(?:\[([^\]]*)\])?(?![\w.])", RegexOptions.CultureInvariant);
        return occurrence.Replace(message, match => Word(words, match.Groups[1]));
    }

    private static string Word(string words, Group index)
    {
        if (!index.Success)
        {
            return words.Replace(" #{n}", "", StringComparison.Ordinal).Replace(" {key}", "", StringComparison.Ordinal);
        }

        string n = int.TryParse(index.Value, NumberStyles.None, CultureInfo.InvariantCulture, out int i) ? (i + 1).ToString(CultureInfo.InvariantCulture) : index.Value;
        return words.Replace("{n}", n, StringComparison.Ordinal).Replace("{key}", index.Value, StringComparison.Ordinal);
    }

    [GeneratedRegex(@"\[[^\]]*\]")]
    private static partial Regex IndexPattern();
}
