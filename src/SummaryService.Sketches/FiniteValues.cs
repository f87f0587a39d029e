namespace SummaryService.Sketches;

/// <summary>Guards the one precondition every sketch shares: values are finite.</summary>
public static class FiniteValues
{
    /// <summary>Throws <see cref="ArgumentOutOfRangeException"/> for NaN or an infinity.</summary>
    public static void Require(double value)
    {
        if (!double.IsFinite(value))
        {
            throw new ArgumentOutOfRangeException(nameof(value), value, "Sketches accept finite values only (no NaN or infinity).");
        }
    }

    /// <summary>Checks a whole span before anything is folded in, so a bad span changes nothing.</summary>
    public static void Require(ReadOnlySpan<double> values)
    {
        int bad = IndexOfNonFinite(values);
        if (bad >= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(values), values[bad], $"values[{bad}] is {values[bad]}; sketches accept finite values only (no NaN or infinity).");
        }
    }

    /// <summary>Index of the first NaN or infinity, or −1.</summary>
    public static int IndexOfNonFinite(ReadOnlySpan<double> values)
    {
        // x − x is 0 for finite x and NaN otherwise; summing in blocks keeps the common case branch-light.
        const int Block = 64;
        for (int start = 0; start < values.Length; start += Block)
        {
            ReadOnlySpan<double> block = values.Slice(start, Math.Min(Block, values.Length - start));
            double probe = 0;
            foreach (double v in block)
            {
                probe += v - v;
            }

            if (probe != 0 || double.IsNaN(probe))
            {
                for (int i = 0; i < block.Length; i++)
                {
                    if (!double.IsFinite(block[i]))
                    {
                        return start + i;
                    }
                }
            }
        }

        return -1;
    }
}
