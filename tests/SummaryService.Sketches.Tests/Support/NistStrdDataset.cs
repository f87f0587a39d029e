using System.Globalization;

namespace SummaryService.Sketches.Tests.Support;

/// <summary>
/// One NIST StRD univariate data set as its certified file gives it (Data/NistStrd, see the README
/// there): the values and the certified sample mean and standard deviation (denominator n − 1).
/// </summary>
public sealed record NistStrdDataset(string Name, double[] Values, double CertifiedMean, double CertifiedStandardDeviation)
{
    private static readonly string Folder = Path.Combine(AppContext.BaseDirectory, "Data", "NistStrd");

    /// <summary>The names of every data set in the folder, for theories over all of them.</summary>
    public static TheoryData<string> Names()
    {
        var names = new TheoryData<string>();
        foreach (string file in Directory.GetFiles(Folder, "*.dat").Order(StringComparer.Ordinal))
        {
            names.Add(Path.GetFileNameWithoutExtension(file));
        }

        return names;
    }

    /// <summary>Reads a data set: the header's certified values and observation count, then the data.</summary>
    public static NistStrdDataset Read(string name)
    {
        string[] lines = File.ReadAllLines(Path.Combine(Folder, name + ".dat"));
        double mean = CertifiedValue(lines, "Sample Mean");
        double sd = CertifiedValue(lines, "Sample Standard Deviation");
        int observations = (int)CertifiedValue(lines, "Number of Observations");

        // The data: one value a line after "Data: Y" and its underline.
        int data = Array.FindIndex(lines, l => l.StartsWith("Data: Y", StringComparison.Ordinal)) + 2;
        double[] values = lines[data..]
            .Where(l => !string.IsNullOrWhiteSpace(l))
            .Select(l => double.Parse(l, NumberStyles.Float, CultureInfo.InvariantCulture))
            .ToArray();
        if (values.Length != observations)
        {
            throw new InvalidDataException($"{name}: {values.Length} values read, the header says {observations}.");
        }

        return new NistStrdDataset(name, values, mean, sd);
    }

    // "Sample Mean                                ybar:  -177.435000000000": the figure after the last colon.
    private static double CertifiedValue(string[] lines, string label)
    {
        string line = lines.Single(l => l.StartsWith(label, StringComparison.Ordinal));
        return double.Parse(line[(line.LastIndexOf(':') + 1)..], NumberStyles.Float, CultureInfo.InvariantCulture);
    }
}
