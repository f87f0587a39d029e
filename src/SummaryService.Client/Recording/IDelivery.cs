namespace SummaryService.Client.Recording;

/// <summary>One upload form: what a sealed chunk becomes, and the loop that sends it.</summary>
internal interface IDelivery
{
    /// <summary>A series' sealed chunk of <paramref name="count"/> values; called from any recording thread.</summary>
    void Accept(RecordedSeries series, ValueChunk chunk, int count);

    /// <summary>Called after every interval's seal: offers whatever has become due (all of it when <paramref name="everything"/>).</summary>
    void Tick(IEnumerable<RecordedSeries> series, long nowUnixMs, bool everything);

    /// <summary>Sends until the outbox is complete and drained with every upload answered, or <paramref name="stop"/> fires.</summary>
    Task RunAsync(CancellationToken stop);

    /// <summary>Uploads sent and not yet answered, given up when the loop has stopped for good.</summary>
    void AbandonUnanswered();
}
