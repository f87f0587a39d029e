using System.Collections.Concurrent;
using System.Text;

namespace SummaryService.Reliability.Tests.Fuzzing;

/// <summary>Outcomes per RPC or route, and the first few examples of every outcome the test forbids.</summary>
internal sealed class FuzzTally
{
    private const int ExamplesKept = 8;
    private readonly ConcurrentDictionary<(string Target, string Outcome), long> _counts = new();
    private readonly ConcurrentQueue<string> _violations = new();
    private long _messages;
    private long _violationCount;

    public long Messages => Interlocked.Read(ref _messages);

    public long Violations => Interlocked.Read(ref _violationCount);

    public IReadOnlyDictionary<(string Target, string Outcome), long> Counts => _counts;

    /// <summary>Counts <paramref name="messages"/> sent to <paramref name="target"/> with this outcome.</summary>
    public void Record(string target, string outcome, int messages = 1)
    {
        Interlocked.Add(ref _messages, messages);
        _counts.AddOrUpdate((target, outcome), 1, (_, n) => n + 1);
    }

    /// <summary>Notes an outcome the contract forbids, keeping the first few descriptions.</summary>
    public void Violation(string description)
    {
        if (Interlocked.Increment(ref _violationCount) <= ExamplesKept)
        {
            _violations.Enqueue(description);
        }
    }

    public long Count(string target) => _counts.Where(c => c.Key.Target == target).Sum(c => c.Value);

    public override string ToString()
    {
        var text = new StringBuilder();
        text.AppendLine($"{Messages} messages, {Violations} violations");
        foreach (var group in _counts.OrderBy(c => c.Key.Target, StringComparer.Ordinal).ThenBy(c => c.Key.Outcome, StringComparer.Ordinal))
        {
            text.AppendLine($"  {group.Key.Target} {group.Key.Outcome}: {group.Value}");
        }

        foreach (string violation in _violations)
        {
            text.AppendLine($"  VIOLATION {violation}");
        }

        return text.ToString();
    }
}
