namespace SummaryService.LoadTest.Workload;

/// <summary>
/// SplitMix64 (Steele, Lea &amp; Flood, OOPSLA 2014): the same seed gives the same stream on every
/// machine and runtime, which <see cref="System.Random"/> does not promise.
/// </summary>
public struct SeededRandom(ulong seed)
{
    private ulong _state = seed;

    /// <summary>The next 64 random bits.</summary>
    public ulong Next()
    {
        _state += 0x9E3779B97F4A7C15UL;
        return Mix(_state);
    }

    /// <summary>Uniform in [0, 1) with 53 random bits.</summary>
    public double NextUnit() => (Next() >> 11) * (1.0 / (1UL << 53));

    /// <summary>Uniform integer in [0, bound).</summary>
    public int NextInt(int bound) => (int)(Next() % (ulong)bound);

    /// <summary>The SplitMix64 finalizer, also a good 64-bit hash.</summary>
    public static ulong Mix(ulong z)
    {
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        return z ^ (z >> 31);
    }
}
