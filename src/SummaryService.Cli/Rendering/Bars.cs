namespace SummaryService.Cli.Rendering;

/// <summary>Text bars and sparklines, drawn with block characters so they survive any terminal and a pipe.</summary>
public static class Bars
{
    private const string Steps = "▁▂▃▄▅▆▇█";

    /// <summary>A bar of up to <paramref name="width"/> cells for <paramref name="value"/> out of <paramref name="max"/>.</summary>
    public static string Bar(double value, double max, int width)
    {
        if (!(max > 0) || !(value > 0))
        {
            return "";
        }

        int cells = (int)Math.Round(Math.Min(1, value / max) * width);
        return new string('█', Math.Max(cells, 1));
    }

    /// <summary>One character per point, scaled between the smallest and largest point; gaps (no data) as spaces.</summary>
    public static string Sparkline(IReadOnlyList<double?> points)
    {
        ArgumentNullException.ThrowIfNull(points);
        double min = double.PositiveInfinity;
        double max = double.NegativeInfinity;
        foreach (double? p in points)
        {
            if (p is double v)
            {
                min = Math.Min(min, v);
                max = Math.Max(max, v);
            }
        }

        var line = new char[points.Count];
        for (int i = 0; i < points.Count; i++)
        {
            line[i] = points[i] is double v
                ? Steps[max > min ? (int)Math.Round((v - min) / (max - min) * (Steps.Length - 1)) : Steps.Length / 2]
                : ' ';
        }

        return new string(line);
    }
}
