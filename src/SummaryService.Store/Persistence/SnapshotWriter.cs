using Google.Protobuf;
using SummaryService.Formats.Store;

namespace SummaryService.Store.Persistence;

/// <summary>
/// Writes one snapshot generation shard by shard into a <c>.tmp</c> directory, fsyncing each file,
/// and renames the directory into place once the manifest is written, so a reader sees either a
/// whole generation or none. Writing shard by shard keeps only one shard's records in memory at a
/// time: a store of millions of buckets would otherwise hold a second, serialized copy of itself.
/// </summary>
internal sealed class SnapshotWriter : IDisposable
{
    private readonly string _final;
    private readonly string _temp;
    private readonly IDataFiles _files;
    private bool _completed;

    private SnapshotWriter(string root, ulong generation, IDataFiles files)
    {
        _files = files;
        _final = Path.Combine(root, $"{generation:D20}");
        _temp = _final + ".tmp";
        if (Directory.Exists(_temp))
        {
            Directory.Delete(_temp, recursive: true);
        }

        Directory.CreateDirectory(_temp);
    }

    /// <summary>Starts generation <paramref name="generation"/> under <paramref name="root"/>.</summary>
    public static SnapshotWriter Begin(string root, ulong generation, IDataFiles files) => new(root, generation, files);

    /// <summary>Writes one shard's file: header, one framed record per series (serialized <c>SeriesRecord</c>s), footer with the count.</summary>
    public void WriteShard(ShardHeader header, IReadOnlyList<byte[]> series)
    {
        WriteFile(Path.Combine(_temp, SnapshotFiles.ShardFileName((int)header.Shard)), stream =>
        {
            RecordFraming.Write(stream, header.ToByteArray());
            foreach (byte[] record in series)
            {
                RecordFraming.Write(stream, record);
            }

            RecordFraming.Write(stream, new ShardFooter { Series = (ulong)series.Count }.ToByteArray());
        });
    }

    /// <summary>Writes the manifest and moves the generation into place; returns its directory.</summary>
    public string Complete(SnapshotManifest manifest)
    {
        WriteFile(Path.Combine(_temp, SnapshotFiles.ManifestName), stream => RecordFraming.Write(stream, manifest.ToByteArray()));
        _files.MoveDirectory(_temp, _final);
        _completed = true;
        return _final;
    }

    /// <summary>Removes the temporary directory of a generation that was never completed.</summary>
    public void Dispose()
    {
        if (!_completed && Directory.Exists(_temp))
        {
            try
            {
                Directory.Delete(_temp, recursive: true);
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                // Left for the next prune, which removes leftover temporary directories.
            }
        }
    }

    private void WriteFile(string path, Action<Stream> write)
    {
        using Stream stream = _files.CreateNew(path);
        write(stream);
        _files.Flush(stream);
    }
}
