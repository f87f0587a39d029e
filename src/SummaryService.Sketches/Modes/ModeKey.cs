namespace SummaryService.Sketches.Modes;

/// <summary>
/// Turns a value into the key it is counted under: the bits of its representative value, which
/// is the value itself (resolution 0) or the centre of its bin of width <c>resolution</c>.
/// </summary>
/// <remarks>Keying by the representative's own bits lets a key be read back as a value without
/// any side table, and gives −0 and +0 one key.</remarks>
internal static class ModeKey
{
    public static long Of(double value, double resolution)
    {
        double representative = value;
        if (resolution > 0)
        {
            double bin = Math.Round(value / resolution) * resolution;
            if (double.IsFinite(bin))
            {
                representative = bin;
            }
        }

        return representative == 0 ? 0 : BitConverter.DoubleToInt64Bits(representative);
    }

    public static double ValueOf(long key) => BitConverter.Int64BitsToDouble(key);

    public static ulong Hash(long key) => SplitMix64.Mix((ulong)key ^ 0x243F6A8885A308D3UL);
}
