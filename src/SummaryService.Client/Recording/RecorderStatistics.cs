namespace SummaryService.Client.Recording;

/// <summary>
/// A moment's copy of the recorder's counters, for a producer's own health metrics and for tests.
/// Every value recorded ends up in exactly one of acknowledged, rejected, dropped or abandoned, or is still held.
/// </summary>
/// <param name="ValuesHeld">Values buffered or sent and not yet answered.</param>
/// <param name="ValuesAcknowledged">Values in batches (or sketches) the server acknowledged, duplicates included.</param>
/// <param name="ValuesDropped">Values refused because the buffer was full (or the recorder closed).</param>
/// <param name="ValuesRejected">Values in batches the server refused with an error reply; never retried.</param>
/// <param name="ValuesAbandoned">Values still unanswered when disposal gave up at its timeout.</param>
/// <param name="BatchesSent">Batches (or sketch uploads) written, resends included.</param>
/// <param name="BatchesAcknowledged">Batches the server answered as applied or duplicate.</param>
/// <param name="DuplicateBatches">Batches the server had already applied: a resend after a failure, counted once.</param>
/// <param name="BatchesRejected">Batches refused with an error reply.</param>
/// <param name="Reconnects">Times the stream (or upload call) failed and was opened again.</param>
public readonly record struct RecorderStatistics(
    long ValuesHeld,
    long ValuesAcknowledged,
    long ValuesDropped,
    long ValuesRejected,
    long ValuesAbandoned,
    long BatchesSent,
    long BatchesAcknowledged,
    long DuplicateBatches,
    long BatchesRejected,
    long Reconnects);
