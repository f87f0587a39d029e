using SummaryService.Contract.V1;
using SummaryService.Formats.V1;
using SummaryService.Sketches.Serialization;
using SummaryService.Server.Validation;
using SummaryService.Store;

namespace SummaryService.Server.Mapping;

/// <summary>Sketch uploads to store inputs (batches go through <see cref="RentedBatch"/>); the store validates names, labels and times.</summary>
public static class IngestMapping
{
    /// <summary>The store upload of a wire upload; a missing or malformed sketch is InvalidArgument naming the field at fault.</summary>
    public static UploadedSketch ToStore(SketchUpload upload)
    {
        ArgumentNullException.ThrowIfNull(upload);
        if (upload.Sketch is null)
        {
            throw RpcErrors.Invalid("sketch", "sketch is missing; upload a SeriesSketchState.");
        }

        return new UploadedSketch
        {
            Metric = upload.Metric,
            Labels = new Dictionary<string, string>(upload.Labels, StringComparer.Ordinal),
            Sketch = SketchCodec.FromState(upload.Sketch),
            TimeUnixMs = upload.TimeUnixMs,
            Producer = upload.Producer,
            Sequence = upload.Sequence,
        };
    }
}
