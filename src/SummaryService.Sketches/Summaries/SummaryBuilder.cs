using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>Turns the parts of a series sketch into one <see cref="Summary"/>.</summary>
internal static class SummaryBuilder
{
    public static Summary Build(MomentSketch moments, KllSketch? quantiles, LogBucketSketch? buckets, ModeSketch modes, SummaryOptions options, EdgeBucketSketch? edges = null)
    {
        options.Validate();
        long n = moments.Count;
        SketchForm form = edges is not null ? SketchForm.EdgeBuckets : (quantiles, buckets) switch
        {
            (not null, not null) => SketchForm.Full,
            (null, not null) => SketchForm.LogBuckets,
            (not null, null) => SketchForm.RankOnly,
            _ => SketchForm.MomentsOnly,
        };
        if (n == 0)
        {
            return new Summary { Count = 0, Exact = true, Confidence = options.Confidence, Form = form };
        }

        var bounds = new SummaryBounds(moments, quantiles, buckets, options.Confidence, edges);
        var median = bounds.Quantile(0.5);
        var lowerQuartile = bounds.Quantile(0.25);
        var upperQuartile = bounds.Quantile(0.75);
        double iqr = upperQuartile.Value - lowerQuartile.Value;
        var mad = Mad(bounds);
        var (modeList, omitted) = Modes(modes, bounds.Occupied, moments, options.MaxModes);

        return MomentFigures(moments, options.Confidence) with
        {
            Form = form,
            RelativeError = buckets?.RelativeError,
            BucketScale = buckets?.Scale,
            // The median and quartiles are read once, for their own figures and for the list.
            Quantiles = options.Quantiles.Select(q => q switch { 0.25 => lowerQuartile, 0.5 => median, 0.75 => upperQuartile, _ => bounds.Quantile(q) }).ToArray(),
            FiveNumber = new FiveNumberSummary(moments.Min, lowerQuartile, median, upperQuartile, moments.Max),
            Iqr = iqr,
            IqrLow = Math.Max(0, upperQuartile.Low - lowerQuartile.High),
            IqrHigh = upperQuartile.High - lowerQuartile.Low,
            IqrLowSource = Bounded.Weaker(upperQuartile.LowSource, lowerQuartile.HighSource),
            IqrHighSource = Bounded.Weaker(upperQuartile.HighSource, lowerQuartile.LowSource),
            Mad = mad?.Mad,
            MadLow = mad?.Low,
            MadHigh = mad?.High,
            MadLowSource = mad?.LowSource ?? BoundSource.None,
            MadHighSource = mad?.HighSource ?? BoundSource.None,
            QuartileSkewness = iqr > 0 ? (upperQuartile.Value + lowerQuartile.Value - (2 * median.Value)) / iqr : null,
            Ranks = options.RankOf.Select(bounds.ShareAtOrBelow).ToArray(),
            Modes = modeList,
            ModesOmitted = omitted,
            Histogram = options.Histogram is { } spec ? Histogram(spec, bounds, buckets, moments) : null,
            Exact = bounds.Exact && modes.IsExact,
            RankError = bounds.Epsilon,
        };
    }

    private static (double Mad, double Low, double High, BoundSource LowSource, BoundSource HighSource)? Mad(SummaryBounds bounds) =>
        bounds.EstimateView is null ? null : MedianAbsoluteDeviation.Estimate(bounds);

    // Discrete data: the mode sketch's values. Continuous data (or an aged bucket past its exact
    // counts): the log buckets' density peaks, led by the zeros when they outnumber every bucket.
    private static (ModeEstimate[] Modes, int Omitted) Modes(ModeSketch modes, OccupiedLogBuckets? buckets, MomentSketch moments, int maxModes)
    {
        if (!modes.IsContinuous)
        {
            var list = modes.Modes(maxModes, out int possible);
            return (list, possible - list.Length);
        }

        if (buckets is null)
        {
            return ([], 0);
        }

        List<ModeEstimate> peaks = DensityPeaks.Find(buckets, moments.Min, moments.Max, moments.Count);
        long zeros = buckets.ZeroCount;
        if (zeros > 0 && buckets.EveryBucketBelow(zeros))
        {
            peaks.Insert(0, new ModeEstimate(0, zeros, zeros, zeros) { Kind = ModeKind.ExactValue, Low = 0, High = 0, Share = (double)zeros / moments.Count });
        }

        return (peaks.Take(maxModes).ToArray(), Math.Max(0, peaks.Count - maxModes));
    }

    private static IReadOnlyList<HistogramBin> Histogram(HistogramSpec spec, SummaryBounds bounds, LogBucketSketch? buckets, MomentSketch moments)
    {
        if (spec.LogBuckets && buckets is not null)
        {
            return LogHistogram.Of(buckets, spec.BinCount, moments.Min, moments.Max);
        }

        return bounds.Histogram(HistogramEdges(spec, moments.Min, moments.Max));
    }

    private static Summary MomentFigures(MomentSketch m, double confidence)
    {
        long n = m.Count;
        double nd = n;
        double? sd = m.StandardDeviation;
        double? se = sd is { } s ? s / Math.Sqrt(nd) : null;
        double? halfWidth = se is { } e ? e * StudentTCritical.TwoSided(nd - 1, confidence) : null;
        return new Summary
        {
            Count = n,
            Sum = m.Sum,
            Mean = m.Mean,
            MeanLow = halfWidth is { } lo ? m.Mean - lo : null,
            MeanHigh = halfWidth is { } hi ? m.Mean + hi : null,
            StandardError = se,
            Variance = m.Variance,
            PopulationVariance = m.PopulationVariance,
            StandardDeviation = sd,
            Skewness = m.Skewness,
            Kurtosis = m.ExcessKurtosis,
            Min = m.Min,
            Max = m.Max,
            Range = m.Max - m.Min,
            ExtremesBounded = !m.ExtremesExact,
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
