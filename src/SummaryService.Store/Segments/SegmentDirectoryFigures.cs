namespace SummaryService.Store.Segments;

/// <summary>What a segment directory holds on disk, for measurements: files, bytes and the buckets their indexes list.</summary>
/// <param name="Files">Complete segment files.</param>
/// <param name="Bytes">Their length together.</param>
/// <param name="Buckets">Buckets their indexes list (live or not: a file is deleted only once none of its buckets is).</param>
/// <param name="Unreadable">Files that failed their checks.</param>
public sealed record SegmentDirectoryFigures(int Files, long Bytes, long Buckets, int Unreadable)
{
    /// <summary>Reads the footer and index of every segment in <paramref name="directory"/>; an empty or missing directory gives zeros.</summary>
    public static SegmentDirectoryFigures Of(string directory)
    {
        if (!Directory.Exists(directory))
        {
            return new SegmentDirectoryFigures(0, 0, 0, 0);
        }

        int files = 0;
        int unreadable = 0;
        long bytes = 0;
        long buckets = 0;
        foreach (string path in Directory.EnumerateFiles(directory, "*" + SegmentLayout.Extension))
        {
            files++;
            bytes += new FileInfo(path).Length;
            try
            {
                using SegmentReader reader = SegmentReader.Open(path);
                buckets += reader.Buckets.Count;
            }
            catch (Exception ex) when (ex is SegmentDamagedException or IOException)
            {
                unreadable++;
            }
        }

        return new SegmentDirectoryFigures(files, bytes, buckets, unreadable);
    }
}
