namespace SummaryService.Benchmarks.Sizes;

/// <summary>Managed bytes allocated by a piece of code on the calling thread.</summary>
internal static class AllocationMeter
{
    /// <summary>Runs <paramref name="build"/> twice and reports the bytes the second run allocated.</summary>
    /// <remarks>
    /// <para>This counts allocated bytes, not live bytes: a buffer that grew from 8 to 12 to 18 items
    /// is counted at every size it passed through, and an array dropped when modes switch to count-min
    /// is counted although it is garbage. The figure is therefore an upper bound on what the finished
    /// sketch keeps alive, which is the safe side for a memory target.</para>
    /// <para>The first run is thrown away because one-off process costs (static tables, the shared
    /// random source behind unseeded sketches) would otherwise be charged to the first sketch.</para>
    /// </remarks>
    public static (T Result, long Bytes) Measure<T>(Func<T> build)
    {
        GC.KeepAlive(build());
        long before = GC.GetAllocatedBytesForCurrentThread();
        T result = build();
        long after = GC.GetAllocatedBytesForCurrentThread();
        return (result, after - before);
    }
}
