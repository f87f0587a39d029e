using SummaryService.Store.Persistence;

namespace SummaryService.Reliability.Tests.Support;

/// <summary>
/// The real file system behind the store's file seam, with a switch: while failing, opening,
/// creating, truncating, renaming and fsync throw the given error, and a write puts half its bytes
/// on disk before throwing, as a disk that fills up mid-record does. Root in CI cannot be stopped by
/// file permissions, and a small loop-mounted file system needs privileges CI may not have.
/// </summary>
internal sealed class FailingDisk : IDataFiles
{
    private readonly LocalDataFiles _local = new();
    private volatile string? _failure;

    /// <summary>From now on every operation fails with <paramref name="reason"/>.</summary>
    public void Fail(string reason) => _failure = reason;

    /// <summary>From now on the disk works again.</summary>
    public void Heal() => _failure = null;

    public Stream OpenAppend(string path)
    {
        ThrowIfFailing();
        return new FaultyStream(_local.OpenAppend(path), this);
    }

    public Stream CreateNew(string path)
    {
        ThrowIfFailing();
        return new FaultyStream(_local.CreateNew(path), this);
    }

    public void Flush(Stream file)
    {
        ThrowIfFailing();
        _local.Flush(((FaultyStream)file).Inner);
    }

    public void MoveDirectory(string from, string to)
    {
        ThrowIfFailing();
        _local.MoveDirectory(from, to);
    }

    private void ThrowIfFailing()
    {
        if (_failure is { } reason)
        {
            throw new IOException(reason);
        }
    }

    private sealed class FaultyStream(Stream inner, FailingDisk disk) : Stream
    {
        public Stream Inner => inner;

        public override bool CanRead => false;

        public override bool CanSeek => inner.CanSeek;

        public override bool CanWrite => inner.CanWrite;

        public override long Length => inner.Length;

        public override long Position
        {
            get => inner.Position;
            set => inner.Position = value;
        }

        public override void Write(byte[] buffer, int offset, int count) => Write(buffer.AsSpan(offset, count));

        public override void Write(ReadOnlySpan<byte> buffer)
        {
            if (disk._failure is not null)
            {
                inner.Write(buffer[..(buffer.Length / 2)]);
                disk.ThrowIfFailing();
            }

            inner.Write(buffer);
        }

        public override void Flush()
        {
            disk.ThrowIfFailing();
            inner.Flush();
        }

        public override void SetLength(long value)
        {
            disk.ThrowIfFailing();
            inner.SetLength(value);
        }

        public override long Seek(long offset, SeekOrigin origin) => inner.Seek(offset, origin);

        public override int Read(byte[] buffer, int offset, int count) => throw new NotSupportedException();

        protected override void Dispose(bool disposing)
        {
            if (disposing)
            {
                inner.Dispose();
            }

            base.Dispose(disposing);
        }
    }
}
