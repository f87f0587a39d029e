using System.Globalization;
using System.Text.RegularExpressions;
using Google.Protobuf;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>
/// Compares two replies field by field through their JSON form, every fractional number to ten
/// significant digits: the cluster merges central moment sums in another grouping than one server
/// (per partition, then across partitions; pairwise formulas of Chan, Golub and LeVeque 1979 and
/// Pébay 2008), which moves the last bits of the shape figures and nothing else.
/// </summary>
internal static partial class WireAnswers
{
    public static void Equal(IMessage expected, IMessage actual) => Assert.Equal(Rounded(expected), Rounded(actual));

    private static string Rounded(IMessage message) =>
        Fraction().Replace(JsonFormatter.Default.Format(message), m => double.Parse(m.Value, CultureInfo.InvariantCulture).ToString("G10", CultureInfo.InvariantCulture));

    [GeneratedRegex(@"-?\d+\.\d+(?:[eE][-+]?\d+)?")]
    private static partial Regex Fraction();
}
