namespace SummaryService.Sketches.Quantiles;

/// <summary>
/// The rank error a KLL sketch will report after a stream of n values, known before any value
/// arrives: which levels compact, and how often, depends only on k and the number of values, not
/// on the values or the coin flips. This replays the sketch's compaction schedule on level sizes
/// alone, without data.
/// </summary>
public static class KllErrorForecast
{
    /// <summary>Largest n accepted: a few seconds of replay.</summary>
    public const long MaxValues = 1L << 33;

    /// <summary>
    /// Normalized rank error ε that a sketch of the given k reports, at the given confidence, after
    /// <paramref name="values"/> values added to one sketch (merges of independently filled sketches
    /// report their own, usually smaller, figure).
    /// </summary>
    public static double RankError(int k, long values, double confidence)
    {
        if (k is < KllSketch.MinK or > KllSketch.MaxK)
        {
            throw new ArgumentOutOfRangeException(nameof(k), k, $"k must be between {KllSketch.MinK} and {KllSketch.MaxK}.");
        }

        if (values is < 0 or > MaxValues)
        {
            throw new ArgumentOutOfRangeException(nameof(values), values, $"values must be between 0 and {MaxValues}.");
        }

        Confidence.Require(confidence);
        if (values == 0)
        {
            return 0;
        }

        var sizes = new long[KllSketch.MaxLevels];
        var compactions = new long[KllSketch.MaxLevels];
        int levelCount = 1;
        long retained = 0;
        long capacity = KllSketch.TotalCapacity(k, 1);
        long remaining = values;
        while (remaining > 0)
        {
            if (retained >= capacity || sizes[0] >= KllSketch.Level0Limit(k, levelCount))
            {
                // Same policy as KllSketch.Compress: the lowest level at capacity, a new level on top first.
                int h = 0;
                while (sizes[h] < KllSketch.LevelCapacity(k, h, levelCount))
                {
                    h++;
                }

                if (h == levelCount - 1)
                {
                    levelCount++;
                    capacity = KllSketch.TotalCapacity(k, levelCount);
                }

                long half = sizes[h] / 2;
                sizes[h + 1] += half;
                sizes[h] &= 1;
                compactions[h]++;
                retained -= half;
            }

            long take = Math.Min(Math.Min(capacity - retained, KllSketch.Level0Limit(k, levelCount) - sizes[0]), remaining);
            sizes[0] += take;
            retained += take;
            remaining -= take;
        }

        double variance = 0;
        for (int h = 0; h < levelCount; h++)
        {
            variance += compactions[h] * Math.ScaleB(1.0, 2 * h);
        }

        return Math.Sqrt(2.0 * variance * Math.Log(2.0 / (1 - confidence))) / values;
    }
}
