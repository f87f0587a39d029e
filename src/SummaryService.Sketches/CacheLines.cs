namespace SummaryService.Sketches;

/// <summary>Brings an array into cache ahead of use.</summary>
/// <remarks>
/// A store holds thousands of sketches and a batch updates one of them, whose arrays have usually
/// left the core's caches since its last batch. Updates touch those lines in a data-dependent order,
/// one dependent chain at a time, so each miss is waited for alone; reading one word per line
/// first lets the misses overlap, the way a streaming copy's do.
/// </remarks>
internal static class CacheLines
{
    private const int LongsPerLine = 64 / sizeof(long);

    public static void Touch(long[] array, int length)
    {
        for (int i = 0; i < length; i += LongsPerLine)
        {
            Volatile.Read(ref array[i]);
        }
    }
}
