using SummaryService.Contract.V1;

namespace SummaryService.Client.Recording;

/// <summary>A batch or sketch upload from the moment it is sealed until the server answers it (or it is given up).</summary>
internal sealed class PendingUpload
{
    public PendingUpload(RecordedSeries series, Batch batch, long values)
    {
        Series = series;
        Batch = batch;
        Values = values;
    }

    public PendingUpload(RecordedSeries series, SketchUpload sketch, long values)
    {
        Series = series;
        Sketch = sketch;
        Values = values;
    }

    public RecordedSeries Series { get; }

    /// <summary>The raw batch, under <see cref="UploadForm.RawValues"/>.</summary>
    public Batch? Batch { get; }

    /// <summary>The sketch upload, under <see cref="UploadForm.Sketches"/>.</summary>
    public SketchUpload? Sketch { get; }

    /// <summary>Values it carries; what the buffer gets back when it is answered.</summary>
    public long Values { get; }

    /// <summary>Assigned once, when first sent, so that send order is sequence order; kept for every resend.</summary>
    public ulong Sequence
    {
        get => Batch?.Sequence ?? Sketch!.Sequence;
        set
        {
            if (Batch is not null)
            {
                Batch.Sequence = value;
            }
            else
            {
                Sketch!.Sequence = value;
            }
        }
    }
}
