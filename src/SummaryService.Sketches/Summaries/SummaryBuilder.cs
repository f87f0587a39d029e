using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>Turns the three sketches of a series into one <see cref="Summary"/>.</summary>
internal static class SummaryBuilder
{
    public static Summary Build(MomentSketch moments, KllSketch quantiles, ModeSketch modes, SummaryOptions options)
    {
        options.Validate();
        long n = moments.Count;
        if (n == 0)
        {
            return new Summary { Count = 0, Exact = true, Confidence = options.Confidence };
        }

        var bounds = new RankBounds(quantiles, options.Confidence);
        var median = bounds.Estimate(0.5);
        var lowerQuartile = bounds.Estimate(0.25);
        var upperQuartile = bounds.Estimate(0.75);
        double iqr = upperQuartile.Value - lowerQuartile.Value;
        var (mad, madLow, madHigh) = MedianAbsoluteDeviation.Estimate(bounds, quantiles.IsExact);
        var modeList = modes.Modes(options.MaxModes, out int possibleModes);

        return MomentFigures(moments, options.Confidence) with
        {
            Quantiles = options.Quantiles.Select(bounds.Estimate).ToArray(),
            FiveNumber = new FiveNumberSummary(moments.Min, lowerQuartile, median, upperQuartile, moments.Max),
            Iqr = iqr,
            IqrLow = Math.Max(0, upperQuartile.Low - lowerQuartile.High),
            IqrHigh = upperQuartile.High - lowerQuartile.Low,
            Mad = mad,
            MadLow = madLow,
            MadHigh = madHigh,
            QuartileSkewness = iqr > 0 ? (upperQuartile.Value + lowerQuartile.Value - (2 * median.Value)) / iqr : null,
            Ranks = options.RankOf.Select(bounds.ShareAtOrBelow).ToArray(),
            Modes = modeList,
            ModesOmitted = possibleModes - modeList.Length,
            Histogram = options.Histogram is { } spec ? bounds.Histogram(HistogramEdges(spec, moments.Min, moments.Max)) : null,
            Exact = quantiles.IsExact && modes.IsExact,
            RankError = bounds.Epsilon,
        };
    }

    private static Summary MomentFigures(MomentSketch m, double confidence)
    {
        long n = m.Count;
        double nd = n;
        double? variance = n >= 2 ? m.M2 / (nd - 1) : null;
        double? sd = variance is { } v ? Math.Sqrt(v) : null;
        double? se = sd is { } s ? s / Math.Sqrt(nd) : null;
        double? halfWidth = se is { } e ? e * StudentT.InvCDF(0, 1, nd - 1, 1 - ((1 - confidence) / 2)) : null;
        bool spread = m.M2 > 0;
        double? skewness = null;
        double? kurtosis = null;
        if (spread && n >= 3)
        {
            // Adjusted Fisher–Pearson G1 = sqrt(n(n−1))/(n−2) · g1 with g1 = sqrt(n)·M3/M2^1.5.
            double g1 = Math.Sqrt(nd) * m.M3 / Math.Pow(m.M2, 1.5);
            skewness = Math.Sqrt(nd * (nd - 1)) / (nd - 2) * g1;
        }

        if (spread && n >= 4)
        {
            // Bias-corrected excess kurtosis G2 = (n−1)/((n−2)(n−3)) · ((n+1)·g2 + 6), g2 = n·M4/M2² − 3.
            double g2 = (nd * m.M4 / (m.M2 * m.M2)) - 3;
            kurtosis = (nd - 1) / ((nd - 2) * (nd - 3)) * (((nd + 1) * g2) + 6);
        }

        return new Summary
        {
            Count = n,
            Sum = m.Sum,
            Mean = m.Mean,
            MeanLow = halfWidth is { } lo ? m.Mean - lo : null,
            MeanHigh = halfWidth is { } hi ? m.Mean + hi : null,
            StandardError = se,
            Variance = variance,
            PopulationVariance = m.M2 / nd,
            StandardDeviation = sd,
            Skewness = skewness,
            Kurtosis = kurtosis,
            Min = m.Min,
            Max = m.Max,
            Range = m.Max - m.Min,
            Confidence = confidence,
        };
    }

    private static double[] HistogramEdges(HistogramSpec spec, double min, double max)
    {
        if (spec.Edges.Count > 0)
        {
            return spec.Edges.ToArray();
        }

        if (!(max > min))
        {
            return [min, max];
        }

        var edges = new double[spec.BinCount + 1];
        double width = (max - min) / spec.BinCount;
        for (int i = 0; i < spec.BinCount; i++)
        {
            edges[i] = min + (i * width);
        }

        edges[^1] = max;
        return edges;
    }
}
