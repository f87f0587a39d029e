using SummaryService.Contract.V1;
using SummaryService.Store;

namespace SummaryService.Server.Mapping;

/// <summary>The coverage flag of a reply built from one or more reads, set only when one of them was partial.</summary>
public static class CoverageMapping
{
    /// <summary>Null when every read was whole; otherwise the partitions any read left out.</summary>
    public static Coverage? ToProto(IEnumerable<WindowSketches> reads)
    {
        ArgumentNullException.ThrowIfNull(reads);
        PartialRead[] partial = [.. reads.Select(r => r.Partial).OfType<PartialRead>()];
        if (partial.Length == 0)
        {
            return null;
        }

        int parts = partial[0].Parts;
        uint[] missing = [.. partial.SelectMany(p => p.Missing).Distinct().Order().Select(p => (uint)p)];
        return new Coverage
        {
            Partitions = (uint)parts,
            Answered = (uint)(parts - missing.Length),
            Share = (parts - missing.Length) / (double)parts,
            Missing = { missing },
        };
    }
}
