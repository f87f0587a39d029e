namespace SummaryService.Benchmarks.Workloads;

/// <summary>Shapes of data a series might carry; each stresses the sketches differently.</summary>
public enum Distribution
{
    /// <summary>Continuous request latencies in milliseconds: every value distinct, so modes fall back to count-min.</summary>
    LogNormalLatency,

    /// <summary>HTTP status codes: integers with a handful of distinct values, so modes stay exact.</summary>
    StatusCodes,

    /// <summary>Symmetric continuous data around a non-zero centre.</summary>
    Normal,

    /// <summary>Continuous data spread evenly over [0, 1).</summary>
    Uniform,
}
