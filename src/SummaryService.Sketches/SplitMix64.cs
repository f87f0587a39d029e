namespace SummaryService.Sketches;

/// <summary>
/// The SplitMix64 generator (Steele, Lea &amp; Flood, "Fast splittable pseudorandom number
/// generators", OOPSLA 2014). Tiny state that serializes as one integer, so a restored sketch
/// continues the exact random sequence of the one that was saved.
/// </summary>
internal struct SplitMix64(ulong state)
{
    /// <summary>The increment of the state per output, γ = 2^64 / φ rounded to odd.</summary>
    public const ulong Gamma = 0x9E3779B97F4A7C15UL;

    /// <summary>The first multiplier of <see cref="Mix"/>.</summary>
    public const ulong FirstMultiplier = 0xBF58476D1CE4E5B9UL;

    /// <summary>The second multiplier of <see cref="Mix"/>.</summary>
    public const ulong SecondMultiplier = 0x94D049BB133111EBUL;

    public ulong State { readonly get; private set; } = state;

    public ulong Next()
    {
        State += Gamma;
        return Mix(State);
    }

    /// <summary>One fair random bit.</summary>
    public int NextBit() => (int)(Next() >> 63);

    /// <summary>The SplitMix64 finalizer: a strong 64-bit mixing function, also used as a hash.</summary>
    public static ulong Mix(ulong z)
    {
        z = (z ^ (z >> 30)) * FirstMultiplier;
        z = (z ^ (z >> 27)) * SecondMultiplier;
        return z ^ (z >> 31);
    }
}
