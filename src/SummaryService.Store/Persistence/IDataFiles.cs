namespace SummaryService.Store.Persistence;

/// <summary>
/// The file operations through which the write-ahead log and snapshots reach the disk: one small
/// seam, so that a test can make a running server's disk fail (full, read-only, dying) and heal.
/// <see cref="LocalDataFiles"/> is the real one. Writes and truncation go through the returned
/// streams; <see cref="Flush"/> is the fsync that makes them durable.
/// </summary>
public interface IDataFiles
{
    /// <summary>Opens (or creates) a log segment for writing at its end; it can be truncated.</summary>
    Stream OpenAppend(string path);

    /// <summary>Creates a new snapshot file; fails if it exists.</summary>
    Stream CreateNew(string path);

    /// <summary>Forces what was written to <paramref name="file"/> onto the device.</summary>
    void Flush(Stream file);

    /// <summary>Renames a directory: how a completed snapshot generation appears.</summary>
    void MoveDirectory(string from, string to);

    /// <summary>Renames a file, never over an existing one: how a completed segment file appears.</summary>
    void MoveFile(string from, string to) => File.Move(from, to, overwrite: false);

    /// <summary>Removes a file if it is there: how a retired segment goes.</summary>
    void DeleteFile(string path) => File.Delete(path);
}
