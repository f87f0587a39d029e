using SummaryService.Readable;

namespace SummaryService.Client.Recording;

/// <summary>
/// One series of a <see cref="MeasurementRecorder"/>, resolved once. Holding on to it and calling
/// <see cref="Record"/> skips even the cache lookup, the cheapest way to record a hot series.
/// </summary>
public sealed class RecordedSeries
{
    internal const int SmallestChunk = 16;

    private readonly MeasurementRecorder _owner;
    private ValueChunk _current;

    internal RecordedSeries(MeasurementRecorder owner, SeriesIdentity identity, IntervalSketches? sketches)
    {
        _owner = owner;
        Identity = identity;
        Metric = identity.Metric;
        var labels = new Dictionary<string, string>(identity.Labels.Length, StringComparer.Ordinal);
        foreach (var (name, value) in identity.Labels)
        {
            labels.Add(name, value);
        }

        Labels = labels;
        Sketches = sketches;
        _current = new ValueChunk(SmallestChunk);
    }

    /// <summary>The metric name.</summary>
    public string Metric { get; }

    /// <summary>The full label set.</summary>
    public IReadOnlyDictionary<string, string> Labels { get; }

    /// <summary>The series as people read it in logs and messages (<c>metric · name=value · …</c>).</summary>
    public override string ToString() => SeriesName.Of(Metric, Labels);

    internal SeriesIdentity Identity { get; }

    /// <summary>Per-interval sketches under <see cref="UploadForm.Sketches"/>; null for raw values.</summary>
    internal IntervalSketches? Sketches { get; }

    /// <summary>The chunk new values go into; swapped (never reused) when sealed.</summary>
    internal ValueChunk Current => Volatile.Read(ref _current);

    /// <summary>Records one finite value at the recorder clock's current time.</summary>
    /// <exception cref="ArgumentOutOfRangeException">The value is NaN or infinite; the server would refuse its whole batch.</exception>
    public void Record(double value) => _owner.Append(this, value);

    /// <summary>Installs <paramref name="fresh"/> in place of <paramref name="expected"/>; false when another thread swapped first.</summary>
    internal bool TrySwap(ValueChunk expected, ValueChunk fresh) =>
        ReferenceEquals(Interlocked.CompareExchange(ref _current, fresh, expected), expected);
}
