using System.Collections.Concurrent;
using SummaryService.Contract.V1;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Reliability.Tests.Fuzzing;

/// <summary>
/// What the server said it accepted, per metric, from the fuzzer's own copy of each acknowledged
/// message: a query afterwards must report exactly these counts, and these sums within rounding.
/// </summary>
internal sealed class AcceptedLedger
{
    private readonly ConcurrentDictionary<string, Totals> _byMetric = new(StringComparer.Ordinal);

    public IReadOnlyDictionary<string, Totals> ByMetric => _byMetric;

    public long Batches => _byMetric.Values.Sum(t => t.Batches);

    public void Add(Batch batch)
    {
        Totals totals = _byMetric.GetOrAdd(batch.Metric, _ => new Totals());
        lock (totals)
        {
            totals.Batches++;
            foreach (double value in batch.Values)
            {
                totals.Add(value);
            }
        }
    }

    public void Add(SketchUpload upload)
    {
        var sketch = SketchCodec.FromState(upload.Sketch);
        Totals totals = _byMetric.GetOrAdd(upload.Metric, _ => new Totals());
        lock (totals)
        {
            totals.Batches++;
            totals.Count += sketch.Count;
            totals.Sum += sketch.Moments.Sum;
            totals.AbsoluteSum += Math.Abs(sketch.Moments.Min) * sketch.Count + Math.Abs(sketch.Moments.Max) * sketch.Count;
        }
    }

    /// <summary>Running totals of one metric.</summary>
    internal sealed class Totals
    {
        public long Batches { get; set; }

        public long Count { get; set; }

        public double Sum { get; set; }

        /// <summary>Σ|v|: the scale rounding differences are measured against.</summary>
        public double AbsoluteSum { get; set; }

        public void Add(double value)
        {
            Count++;
            Sum += value;
            AbsoluteSum += Math.Abs(value);
        }
    }
}
