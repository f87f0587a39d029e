using SummaryService.Contract.V1;
using SummaryService.Sketches.Summaries;
using SummaryService.Store;

namespace SummaryService.Server.Mapping;

/// <summary>Timeline steps and side-by-side comparisons to their wire form; the statistics are the sketches' own (<see cref="SketchComparison"/>).</summary>
public static class ComparisonMapping
{
    /// <summary>One timeline step per answer, each with its nominal span and the span its buckets covered; groups without values are left out.</summary>
    public static TimelineReply ToTimeline(TimeWindow window, long stepMs, IReadOnlyList<WindowSummary> answers)
    {
        ArgumentNullException.ThrowIfNull(answers);
        var reply = new TimelineReply();
        for (int i = 0; i < answers.Count; i++)
        {
            long from = window.FromUnixMs + (i * stepMs);
            var range = new TimeWindow(from, Math.Min(from + stepMs, window.ToUnixMs));
            var entry = new TimelineStep { Step = SummaryMapping.ToProto(range), Covered = SummaryMapping.ToProto(answers[i].Covered) };
            foreach (SummarizedGroup group in answers[i].Groups)
            {
                if (group.Summary.Count > 0)
                {
                    entry.Groups.Add(SummaryMapping.ToProto(group));
                }
            }

            reply.Steps.Add(entry);
        }

        return reply;
    }

    /// <summary>Both sides' summaries, the shift of each asked quantile (when both sides hold values) and the Kolmogorov–Smirnov distance with its bounds.</summary>
    public static CompareReply ToComparison(WindowSummary a, WindowSummary b, SummaryOptions options)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        ArgumentNullException.ThrowIfNull(options);
        SummarizedGroup left = a.Groups[0];
        SummarizedGroup right = b.Groups[0];
        var reply = new CompareReply
        {
            A = SummaryMapping.ToProto(left.Summary),
            B = SummaryMapping.ToProto(right.Summary),
            CoveredA = SummaryMapping.ToProto(a.Covered),
            CoveredB = SummaryMapping.ToProto(b.Covered),
        };
        if (left.Summary.Count > 0 && right.Summary.Count > 0)
        {
            foreach (double q in options.Quantiles)
            {
                reply.Shifts.Add(SummaryMapping.ToProto(SketchComparison.Shift(left.Sketch, right.Sketch, q, options.Confidence)));
            }
        }

        var (distance, low, high) = SketchComparison.KolmogorovSmirnov(left.Sketch, right.Sketch, options.Confidence);
        reply.KsDistance = distance;
        reply.KsLow = low;
        reply.KsHigh = high;
        return reply;
    }
}
