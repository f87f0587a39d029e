using System.Buffers;
using SummaryService.Sketches.Modes;

namespace SummaryService.Sketches.Buckets;

/// <summary>
/// Modes of continuous data: the peaks of the density the log buckets hold (count ÷ bucket width),
/// smoothed over neighbouring buckets so that sampling noise makes no peaks, most prominent first.
/// </summary>
/// <remarks>
/// <para>Counts are smoothed over bucket indices (log-magnitude space) with a near-Gaussian kernel
/// (three passes of a moving average) whose width follows Silverman's rule of thumb,
/// 0.9·min(sd, IQR/1.34)·n^(−1/5), on the logarithms of the magnitudes, never below one bucket. The density at a bucket is its smoothed count over its
/// width in value units.</para>
/// <para>A local maximum is a peak when it rises above its base — the higher of the lowest points
/// between it and higher ground on either side (topographic prominence) — by more than
/// <see cref="NoiseDeviations"/> standard deviations of the difference, the smoothed counts being
/// treated as Poisson (a smoothed count S with kernel width h has variance S/(2√π·h)). The highest
/// peak is always one.</para>
/// <para>Each peak reports: its densest bucket's midpoint; where it lies, the buckets around it whose
/// density is within the noise of the top; its hump, the buckets between the lowest points that
/// separate it from the neighbouring peaks, with the exact number and share of values there.</para>
/// </remarks>
internal static class DensityPeaks
{
    /// <summary>Standard deviations a dip must exceed to separate two peaks (common practice: 3).</summary>
    public const double NoiseDeviations = 3;

    // Working curves per range: counts, smoothed, scratch, density, and the two running maxima.
    private const int Curves = 6;

    // 2√π, the kernel's effective width per unit of its standard deviation.
    private static readonly double EffectiveWidth = 2 * Math.Sqrt(Math.PI);

    /// <summary>Peaks of both ranges, most prominent first, shares relative to <paramref name="total"/>.</summary>
    public static List<ModeEstimate> Find(LogBucketSketch sketch, double min, double max, long total) =>
        Find(OccupiedLogBuckets.Of(sketch), min, max, total);

    /// <summary>Peaks of both ranges of buckets already read out.</summary>
    public static List<ModeEstimate> Find(OccupiedLogBuckets buckets, double min, double max, long total)
    {
        var peaks = new List<(double Prominence, ModeEstimate Mode)>();
        AddPeaksOfRange(peaks, buckets.Positive, buckets.Mapping, negative: false, min, max, total);
        AddPeaksOfRange(peaks, buckets.Negative, buckets.Mapping, negative: true, min, max, total);
        return peaks.OrderByDescending(p => p.Prominence).Select(p => p.Mode).ToList();
    }

    // Prominence is kept as its logarithm, so ranges of any magnitude compare without overflow.
    private static void AddPeaksOfRange(List<(double Prominence, ModeEstimate Mode)> peaks, (int[] Indices, long[] Counts) buckets, ExponentialMapping mapping, bool negative, double min, double max, long total)
    {
        (int[] indices, long[] occupied) = buckets;
        if (indices.Length == 0)
        {
            return;
        }

        // The smoothing blurs over h buckets anyway: read the density at the coarsest scale where the
        // kernel still spans two buckets (neighbours combined exactly), which divides the work by
        // up to h/2 and loses nothing the smoothing kept.
        // Bucket i folds into i >> fold, where the counts are added as they are placed.
        double bandwidthAtScale = Bandwidth(indices, occupied);
        int fold = Math.Max(0, Math.Min(mapping.Scale - ExponentialMapping.MinScale, (int)Math.Floor(Math.Log2(bandwidthAtScale / 2))));
        mapping = fold > 0 ? ExponentialMapping.ForScale(mapping.Scale - fold) : mapping;

        // Three passes of a box of 2r + 1 buckets: a near-Gaussian kernel of standard deviation
        // sqrt(r(r + 1)), in time linear in the buckets spanned.
        int radius = BoxRadius(Math.Max(1, bandwidthAtScale / (1 << fold)));
        int reach = (3 * radius) + 1;
        int lowest = indices[0] >> fold;
        int first = lowest - reach;
        int length = (indices[^1] >> fold) - lowest + 1 + (2 * reach);
        // Working arrays of the span's length, borrowed: nothing of them outlives this call.
        double[] rented = ArrayPool<double>.Shared.Rent(Curves * length);
        int[] rentedPositions = ArrayPool<int>.Shared.Rent(2 * length);
        try
        {
            AddPeaks(peaks, rented.AsSpan(0, Curves * length), rentedPositions.AsSpan(0, 2 * length), (indices, occupied, fold), mapping, first, radius, negative, min, max, total);
        }
        finally
        {
            ArrayPool<double>.Shared.Return(rented);
            ArrayPool<int>.Shared.Return(rentedPositions);
        }
    }

    // Counts are whole numbers far below 2^53, so adding them as doubles is exact.
    private static void AddPeaks(List<(double Prominence, ModeEstimate Mode)> peaks, Span<double> work, Span<int> positions, (int[] Indices, long[] Counts, int Fold) buckets, ExponentialMapping mapping, int first, int radius, bool negative, double min, double max, long total)
    {
        (int[] indices, long[] occupied, int fold) = buckets;
        int length = work.Length / Curves;
        Span<double> counts = work[..length];
        Span<double> smoothed = work.Slice(length, length);
        Span<double> scratch = work.Slice(2 * length, length);
        Span<double> density = work.Slice(3 * length, length);
        counts.Clear();
        for (int j = 0; j < indices.Length; j++)
        {
            counts[(indices[j] >> fold) - first] += occupied[j];
        }

        double logBase = Math.Log(mapping.Base);
        double bandwidth = Math.Sqrt(radius * (radius + 1.0));
        Smooth(counts, smoothed, radius);
        Smooth(smoothed, scratch, radius);
        Smooth(scratch, smoothed, radius);

        // Density S/width with width = base^k·(base − 1), scaled so that the highest is 1. Each bucket
        // is 1/base as wide as the next, so the density is carried by one multiply per bucket; the
        // logarithm of the scale (top) keeps the two ranges comparable whatever their magnitudes.
        double stepDown = 1 / mapping.Base;
        double factor = 1;
        double logFactor = 0;
        for (int k = 0; k < length; k++)
        {
            if (factor < 1e-250)
            {
                // Rescale before the factor underflows (wide ranges at coarse scales).
                logFactor += Math.Log(factor);
                for (int j = 0; j < k; j++)
                {
                    density[j] /= factor;
                }

                factor = 1;
            }

            density[k] = smoothed[k] * factor;
            factor *= stepDown;
        }

        int peakAt = 0;
        for (int k = 1; k < length; k++)
        {
            peakAt = density[k] > density[peakAt] ? k : peakAt;
        }

        double peakDensity = density[peakAt];
        double top = Math.Log(peakDensity) + logFactor - ((first * logBase) + Math.Log(mapping.Base - 1));
        double toUnit = 1 / peakDensity;
        for (int k = 0; k < length; k++)
        {
            density[k] *= toUnit;
        }

        double perCount = EffectiveWidth * bandwidth;

        var bases = new PeakBases(density, work.Slice(4 * length, length), work.Slice(5 * length, length), positions[..length], positions.Slice(length, length));
        var kept = new List<(int At, double Prominence)>();
        for (int k = 0; k < length; k++)
        {
            bool rises = k == 0 || density[k] > density[k - 1];
            bool falls = k == length - 1 || density[k] >= density[k + 1];
            if (!(rises && falls && density[k] > 0))
            {
                continue;
            }

            // Even a dip to nothing could not lift a peak this close to its own noise: skip the
            // search for its base (the sparse tail is full of such small maxima).
            bool highest = k == peakAt;
            double peakDeviation = Deviation(density, smoothed, perCount, k);
            if (!highest && density[k] <= NoiseDeviations * peakDeviation)
            {
                continue;
            }

            int baseAt = bases.BaseOf(k);
            double rise = density[k] - density[baseAt];
            double baseDeviation = Deviation(density, smoothed, perCount, baseAt);
            double noise = NoiseDeviations * Math.Sqrt((peakDeviation * peakDeviation) + (baseDeviation * baseDeviation));
            if (highest || rise > noise)
            {
                kept.Add((k, top + Math.Log(rise > 0 ? rise : 1)));
            }
        }

        for (int p = 0; p < kept.Count; p++)
        {
            int at = kept[p].At;
            int from = p == 0 ? 0 : LowestBetween(density, kept[p - 1].At, at) + 1;
            int to = p == kept.Count - 1 ? length - 1 : LowestBetween(density, at, kept[p + 1].At);
            long hump = 0;
            for (int k = from; k <= to; k++)
            {
                hump += (long)counts[k];
            }

            // Where the density cannot be told from the peak's: within the noise of the top.
            double floor = density[at] - (NoiseDeviations * Deviation(density, smoothed, perCount, at));
            int left = at;
            while (left > from && density[left - 1] >= floor)
            {
                left--;
            }

            int right = at;
            while (right < to && density[right + 1] >= floor)
            {
                right++;
            }

            (double lowMagnitude, _) = mapping.Bounds(first + left);
            (_, double highMagnitude) = mapping.Bounds(first + right);
            (double peakLow, double peakHigh) = mapping.Bounds(first + at);
            double centre = peakLow + ((peakHigh - peakLow) / 2);
            (double low, double high, double value) = negative
                ? (-highMagnitude, -lowMagnitude, -centre)
                : (lowMagnitude, highMagnitude, centre);
            low = Math.Clamp(low, min, max);
            high = Math.Clamp(high, min, max);
            peaks.Add((kept[p].Prominence, new ModeEstimate(Math.Clamp(value, low, high), hump, hump, hump)
            {
                Kind = ModeKind.Region,
                Low = low,
                High = high,
                Share = total == 0 ? 0 : (double)hump / total,
            }));
        }
    }

    // Standard deviation of a density, read only where a peak is weighed.
    private static double Deviation(ReadOnlySpan<double> density, ReadOnlySpan<double> smoothed, double perCount, int k) =>
        smoothed[k] > 0 ? density[k] / Math.Sqrt(smoothed[k] * perCount) : 0;

    // Silverman's rule on ln|x| with each bucket's values at its log-midpoint, in bucket units.
    // One pass for the count and the first two moments (offsets from the lowest index keep the
    // squares small, so the difference of means loses nothing) and one for both quartiles.
    private static double Bandwidth(int[] indices, long[] counts)
    {
        int origin = indices[0];
        double n = 0;
        double sum = 0;
        double squares = 0;
        for (int j = 0; j < indices.Length; j++)
        {
            double c = counts[j];
            double d = indices[j] - origin;
            n += c;
            sum += c * d;
            squares += c * d * d;
        }

        double mean = sum / n;
        double variance = Math.Max(0, (squares / n) - (mean * mean));
        (double lowerQuartile, double upperQuartile) = IndicesAtQuartiles(indices, counts, n);
        double iqr = upperQuartile - lowerQuartile;
        double spread = Math.Min(Math.Sqrt(variance), iqr / 1.34);
        if (!(spread > 0))
        {
            spread = Math.Sqrt(variance);
        }

        // The rule holds in any unit proportional to ln|x|; bucket indices are ln|x| / ln(base).
        return Math.Max(1, 0.9 * spread * Math.Pow(n, -0.2));
    }

    // The first buckets whose running count reaches a quarter and three quarters of n.
    private static (double Lower, double Upper) IndicesAtQuartiles(int[] indices, long[] counts, double n)
    {
        double lowerAt = 0.25 * n;
        double upperAt = 0.75 * n;
        double lower = double.NaN;
        double running = 0;
        for (int j = 0; j < indices.Length; j++)
        {
            running += counts[j];
            if (double.IsNaN(lower) && running >= lowerAt)
            {
                lower = indices[j] + 0.5;
            }

            if (running >= upperAt)
            {
                return (lower, indices[j] + 0.5);
            }
        }

        double last = indices[^1] + 0.5;
        return (double.IsNaN(lower) ? last : lower, last);
    }

    // The r whose triple box has the standard deviation closest to the bandwidth: r(r + 1) = h².
    private static int BoxRadius(double bandwidth) =>
        Math.Max(1, (int)Math.Round((Math.Sqrt(1 + (4 * bandwidth * bandwidth)) - 1) / 2));

    // Moving average over 2r + 1 buckets, zeros beyond the ends, from values into smoothed.
    private static void Smooth(ReadOnlySpan<double> values, Span<double> smoothed, int radius)
    {
        double width = (2 * radius) + 1;
        double window = 0;
        for (int k = -radius; k < values.Length; k++)
        {
            int enters = k + radius;
            int leaves = k - radius - 1;
            window += (enters < values.Length ? values[enters] : 0) - (leaves >= 0 ? values[leaves] : 0);
            if (k >= 0)
            {
                smoothed[k] = Math.Max(0, window / width);
            }
        }
    }

    private static int LowestBetween(ReadOnlySpan<double> density, int from, int to)
    {
        int lowest = from;
        for (int i = from; i <= to; i++)
        {
            if (density[i] < density[lowest])
            {
                lowest = i;
            }
        }

        return lowest;
    }
}
