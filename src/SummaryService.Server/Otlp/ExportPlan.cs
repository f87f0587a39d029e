using SummaryService.Store;

namespace SummaryService.Server.Otlp;

/// <summary>What one export asks the store to take, series by series, and what it could not say in series terms.</summary>
public sealed class ExportPlan
{
    private readonly Dictionary<SeriesKey, PlannedValues> _values = [];

    /// <summary>Values per series, in the order their series first appeared.</summary>
    public List<PlannedValues> Values { get; } = [];

    /// <summary>Sketches built from histogram points, one per point.</summary>
    public List<PlannedSketch> Sketches { get; } = [];

    /// <summary>Points not taken, with the reasons.</summary>
    public PointRejections Rejections { get; } = new();

    /// <summary>Adds one value to its series' batch.</summary>
    public void AddValue(string metric, Dictionary<string, string> labels, double value, long timeUnixMs)
    {
        var key = new SeriesKey(metric, labels);
        if (!_values.TryGetValue(key, out PlannedValues? planned))
        {
            planned = new PlannedValues(metric, labels);
            _values.Add(key, planned);
            Values.Add(planned);
        }

        planned.Values.Add(value);
        planned.Times.Add(timeUnixMs);
    }
}

/// <summary>The values of one series in one export, each at its own time.</summary>
public sealed class PlannedValues(string metric, Dictionary<string, string> labels)
{
    /// <summary>Metric name.</summary>
    public string Metric { get; } = metric;

    /// <summary>Series labels.</summary>
    public Dictionary<string, string> Labels { get; } = labels;

    /// <summary>One value per point.</summary>
    public List<double> Values { get; } = [];

    /// <summary>Each value's time, Unix ms.</summary>
    public List<long> Times { get; } = [];

    /// <summary>The store batch.</summary>
    public SeriesBatch ToBatch() => new()
    {
        Metric = Metric,
        Labels = Labels,
        Values = Values.ToArray(),
        ValueTimesUnixMs = Times.ToArray(),
    };
}

/// <summary>A histogram point as a sketch for its series, and how many points it stands for (one).</summary>
public sealed record PlannedSketch(UploadedSketch Upload);

/// <summary>Counts points not taken and keeps the first few distinct reasons, for OTLP's partial-success reply.</summary>
public sealed class PointRejections
{
    private const int ReasonsKept = 4;
    private readonly List<string> _reasons = [];
    private readonly List<string> _notes = [];

    /// <summary>Points not taken.</summary>
    public long Count { get; private set; }

    /// <summary>Points taken only as starting values of cumulative streams (nothing recorded, nothing lost).</summary>
    public long Baselines { get; private set; }

    /// <summary>Counts <paramref name="points"/> points refused for the reason.</summary>
    public void Reject(long points, string reason)
    {
        if (points <= 0)
        {
            return;
        }

        Count += points;
        if (_reasons.Count < ReasonsKept && !_reasons.Contains(reason, StringComparer.Ordinal))
        {
            _reasons.Add(reason);
        }
    }

    /// <summary>Counts a cumulative point taken as its stream's starting value.</summary>
    public void Baseline() => Baselines++;

    /// <summary>Records a remark about points that were taken (said in the reply, nothing rejected).</summary>
    public void Note(string note)
    {
        if (_notes.Count < ReasonsKept && !_notes.Contains(note, StringComparer.Ordinal))
        {
            _notes.Add(note);
        }
    }

    /// <summary>The reply's message: the reasons, then the notes; empty when there is nothing to say.</summary>
    public string Message()
    {
        var parts = new List<string>(_reasons);
        if (Baselines > 0)
        {
            parts.Add($"{Baselines} cumulative point(s) began streams that started before this server listened; they are the starting values and later points are recorded as differences from them");
        }

        parts.AddRange(_notes);
        return string.Join("; ", parts);
    }
}
