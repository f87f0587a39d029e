namespace SummaryService.Store.Persistence;

/// <summary>The local file system, unbuffered: what a write returned is with the operating system, and <see cref="Flush"/> is fsync.</summary>
public sealed class LocalDataFiles : IDataFiles
{
    /// <inheritdoc/>
    public Stream OpenAppend(string path)
    {
        var stream = new FileStream(path, FileMode.OpenOrCreate, FileAccess.Write, FileShare.Read, bufferSize: 0);
        stream.Seek(0, SeekOrigin.End);
        return stream;
    }

    /// <inheritdoc/>
    public Stream CreateNew(string path) => new FileStream(path, FileMode.CreateNew, FileAccess.Write, FileShare.None, bufferSize: 1 << 16);

    /// <inheritdoc/>
    public void Flush(Stream file)
    {
        ArgumentNullException.ThrowIfNull(file);
        if (file is FileStream fileStream)
        {
            fileStream.Flush(flushToDisk: true);
        }
        else
        {
            file.Flush();
        }
    }

    /// <inheritdoc/>
    public void MoveDirectory(string from, string to) => Directory.Move(from, to);
}
