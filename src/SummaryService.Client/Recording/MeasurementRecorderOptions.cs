using SummaryService.Sketches;

namespace SummaryService.Client.Recording;

/// <summary>Buffering, delivery and failure handling of a <see cref="MeasurementRecorder"/>.</summary>
public sealed record MeasurementRecorderOptions
{
    /// <summary>
    /// Identity the server uses to recognise a resent batch as a duplicate. Defaults to a fresh random
    /// id per recorder. Sequences start at the recorder's start time in microseconds, so a restarted
    /// process that reuses a fixed id still numbers above everything its previous run sent.
    /// </summary>
    public string Producer { get; init; } = "recorder-" + Guid.NewGuid().ToString("N");

    /// <summary>Most values in one batch; a series' buffer is sent as soon as it holds this many.</summary>
    public int MaxBatchValues { get; init; } = 4096;

    /// <summary>Longest a recorded value waits before its batch is sent (and, for sketches, the span one sketch covers).</summary>
    public TimeSpan FlushInterval { get; init; } = TimeSpan.FromSeconds(1);

    /// <summary>
    /// Most values held at once: buffered, in flight, or waiting for the server to come back. Bounds the
    /// recorder's memory at roughly 16 bytes per value plus per-batch overhead.
    /// </summary>
    public long BufferCapacity { get; init; } = 1_000_000;

    /// <summary>What recording does when <see cref="BufferCapacity"/> values are held.</summary>
    public FullBufferPolicy WhenFull { get; init; } = FullBufferPolicy.DropAndCount;

    /// <summary>Longest one recording call waits under <see cref="FullBufferPolicy.Block"/>; infinite waits until room frees or the recorder is disposed.</summary>
    public TimeSpan BlockTimeout { get; init; } = Timeout.InfiniteTimeSpan;

    /// <summary>Raw values over a stream, or one sketch per series and interval.</summary>
    public UploadForm Form { get; init; } = UploadForm.RawValues;

    /// <summary>
    /// Sketch settings under <see cref="UploadForm.Sketches"/>; the mode settings (resolution, count-min
    /// width and depth) must equal the server's <c>Store:ModeResolution</c> and defaults, or every upload is refused.
    /// </summary>
    public SeriesSketchOptions SketchOptions { get; init; } = SeriesSketchOptions.Default;

    /// <summary>First pause after a failed connection; each further failure doubles it, up to <see cref="MaxBackoff"/>.</summary>
    public TimeSpan InitialBackoff { get; init; } = TimeSpan.FromMilliseconds(100);

    /// <summary>Longest pause between reconnection attempts.</summary>
    public TimeSpan MaxBackoff { get; init; } = TimeSpan.FromSeconds(10);

    /// <summary>Deadline of one sketch upload call.</summary>
    public TimeSpan CallTimeout { get; init; } = TimeSpan.FromSeconds(30);

    /// <summary>Longest <see cref="MeasurementRecorder.DisposeAsync()"/> waits for the final flush to be acknowledged.</summary>
    public TimeSpan DisposeTimeout { get; init; } = TimeSpan.FromSeconds(10);

    /// <summary>Clock for record times, flush intervals and back-off.</summary>
    public TimeProvider TimeProvider { get; init; } = TimeProvider.System;

    internal void Validate()
    {
        ArgumentException.ThrowIfNullOrEmpty(Producer, nameof(Producer));
        ArgumentOutOfRangeException.ThrowIfLessThan(MaxBatchValues, 1, nameof(MaxBatchValues));
        ArgumentOutOfRangeException.ThrowIfLessThan(FlushInterval, TimeSpan.FromMilliseconds(1), nameof(FlushInterval));
        ArgumentOutOfRangeException.ThrowIfLessThan(BufferCapacity, MaxBatchValues, nameof(BufferCapacity));
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(InitialBackoff, TimeSpan.Zero, nameof(InitialBackoff));
        ArgumentOutOfRangeException.ThrowIfLessThan(MaxBackoff, InitialBackoff, nameof(MaxBackoff));
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(CallTimeout, TimeSpan.Zero, nameof(CallTimeout));
        ArgumentOutOfRangeException.ThrowIfLessThan(DisposeTimeout, TimeSpan.Zero, nameof(DisposeTimeout));
        ArgumentNullException.ThrowIfNull(SketchOptions, nameof(SketchOptions));
        ArgumentNullException.ThrowIfNull(TimeProvider, nameof(TimeProvider));
        if (BlockTimeout != Timeout.InfiniteTimeSpan)
        {
            ArgumentOutOfRangeException.ThrowIfLessThan(BlockTimeout, TimeSpan.Zero, nameof(BlockTimeout));
        }
    }
}
