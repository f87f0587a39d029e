namespace SummaryService.Cli.Parsing;

/// <summary>Label matchers as <c>name=value</c>; every one given must match exactly.</summary>
public static class LabelText
{
    /// <summary>Parses the matchers, refusing a missing '=', an empty name or a name given twice.</summary>
    public static bool TryParse(IEnumerable<string> matchers, out Dictionary<string, string> labels, out string error)
    {
        labels = new Dictionary<string, string>(StringComparer.Ordinal);
        error = "";
        foreach (string matcher in matchers)
        {
            int eq = matcher.IndexOf('=', StringComparison.Ordinal);
            if (eq <= 0)
            {
                error = $"label '{matcher}' is not name=value (e.g. region=north).";
                return false;
            }

            string name = matcher[..eq].Trim();
            if (!labels.TryAdd(name, matcher[(eq + 1)..].Trim()))
            {
                error = $"label '{name}' is given twice.";
                return false;
            }
        }

        return true;
    }
}
