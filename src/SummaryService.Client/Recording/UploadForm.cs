namespace SummaryService.Client.Recording;

/// <summary>How recorded values travel to the server.</summary>
public enum UploadForm
{
    /// <summary>Every value, with its record time, in batches over one long-lived <c>Ingest.PushStream</c>; the server sees exactly what was recorded.</summary>
    RawValues,

    /// <summary>
    /// Each series folds its values into a <c>SeriesSketch</c> per flush interval and uploads it with
    /// <c>Ingest.PushSketch</c>: a few kilobytes per series and interval whatever the rate, for producers
    /// at very high rates. Counts, sums and moments stay exact; quantiles carry the sketch's reported bound.
    /// </summary>
    Sketches,
}
