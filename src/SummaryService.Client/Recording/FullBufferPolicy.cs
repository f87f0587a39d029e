namespace SummaryService.Client.Recording;

/// <summary>What <see cref="MeasurementRecorder.Record(string, ReadOnlySpan{ValueTuple{string, string}}, double)"/> does when the buffer holds its capacity.</summary>
public enum FullBufferPolicy
{
    /// <summary>
    /// The recording thread waits for room (back-pressure), at most
    /// <see cref="MeasurementRecorderOptions.BlockTimeout"/>; a value that still finds no room is dropped and counted.
    /// </summary>
    Block,

    /// <summary>The value is dropped at once and counted in <see cref="RecorderStatistics.ValuesDropped"/>; recording never waits.</summary>
    DropAndCount,
}
