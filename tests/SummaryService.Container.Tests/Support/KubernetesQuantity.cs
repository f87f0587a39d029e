using System.Globalization;

namespace SummaryService.Container.Tests.Support;

/// <summary>Kubernetes resource quantities (the API's quantity format): binary suffixes Ki…Ti, decimal k…T, and m for thousandths.</summary>
internal static class KubernetesQuantity
{
    private static readonly (string Suffix, double Factor)[] Suffixes =
    [
        ("Ki", 1L << 10), ("Mi", 1L << 20), ("Gi", 1L << 30), ("Ti", 1L << 40),
        ("k", 1e3), ("M", 1e6), ("G", 1e9), ("T", 1e12), ("m", 1e-3),
    ];

    public static double Parse(string quantity)
    {
        foreach (var (suffix, factor) in Suffixes)
        {
            if (quantity.EndsWith(suffix, StringComparison.Ordinal))
            {
                return double.Parse(quantity[..^suffix.Length], CultureInfo.InvariantCulture) * factor;
            }
        }

        return double.Parse(quantity, CultureInfo.InvariantCulture);
    }
}
