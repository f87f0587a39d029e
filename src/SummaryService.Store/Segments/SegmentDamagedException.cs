namespace SummaryService.Store.Segments;

/// <summary>A segment file that fails its checks: cut short, a checksum that does not match, or content that cannot be decoded.</summary>
public sealed class SegmentDamagedException : IOException
{
    /// <summary>Creates the exception for <paramref name="fileName"/>; the message names the file and what is wrong.</summary>
    public SegmentDamagedException(string fileName, string problem, Exception? inner = null)
        : base($"segment {fileName} is damaged: {problem}", inner)
    {
        FileName = fileName;
        Problem = problem;
    }

    /// <summary>The segment's file name (without its directory).</summary>
    public string FileName { get; }

    /// <summary>What is wrong with it.</summary>
    public string Problem { get; }
}
