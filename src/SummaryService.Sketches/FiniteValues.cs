using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

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
        // A double is NaN or infinite exactly when its exponent bits are all ones; blocks are
        // checked with vector compares and only a block that has one is searched value by value.
        const int Block = 64;
        const long Exponent = 0x7FF0_0000_0000_0000;
        ReadOnlySpan<long> bits = MemoryMarshal.Cast<double, long>(values);
        for (int start = 0; start < bits.Length; start += Block)
        {
            ReadOnlySpan<long> block = bits.Slice(start, Math.Min(Block, bits.Length - start));
            int i = 0;
            bool suspect = false;
            if (Vector256.IsHardwareAccelerated)
            {
                var mask = Vector256.Create(Exponent);
                var found = Vector256<long>.Zero;
                for (; i <= block.Length - Vector256<long>.Count; i += Vector256<long>.Count)
                {
                    found |= Vector256.Equals(Vector256.Create(block.Slice(i, Vector256<long>.Count)) & mask, mask);
                }

                suspect = found != Vector256<long>.Zero;
            }

            for (; i < block.Length && !suspect; i++)
            {
                suspect = (block[i] & Exponent) == Exponent;
            }

            if (suspect)
            {
                for (int j = 0; j < block.Length; j++)
                {
                    if ((block[j] & Exponent) == Exponent)
                    {
                        return start + j;
                    }
                }
            }
        }

        return -1;
    }
}
