using System.Runtime.CompilerServices;

namespace SummaryService.Benchmarks.Sizes;

/// <summary>Approximate bytes an object graph keeps alive, from the heap size after full collections.</summary>
internal static class LiveBytesMeter
{
    /// <summary>Average growth of the collected heap per copy while <paramref name="copies"/> results are held.</summary>
    /// <remarks>
    /// A complement to <see cref="AllocationMeter"/>, which overstates by counting garbage. The heap size
    /// is coarse for one small object, so many copies are held and the growth averaged; the result is
    /// an estimate (within a few per cent of a hand count for the 10-value sketch), not an exact figure.
    /// Not inlined so that no earlier array lingers in a stack slot and muddles the baseline.
    /// </remarks>
    [MethodImpl(MethodImplOptions.NoInlining)]
    public static long Measure<T>(Func<T> build, int copies)
    {
        var keep = new T[copies];
        long before = GC.GetTotalMemory(forceFullCollection: true);
        for (int i = 0; i < keep.Length; i++)
        {
            keep[i] = build();
        }

        long after = GC.GetTotalMemory(forceFullCollection: true);
        GC.KeepAlive(keep);
        return (after - before) / copies;
    }
}
