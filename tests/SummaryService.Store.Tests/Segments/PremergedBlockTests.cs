using SummaryService.Store.Segments;

namespace SummaryService.Store.Tests.Segments;

/// <summary>
/// Every test of <see cref="SegmentedStoreTests"/> again with spans of six buckets, so that whole
/// blocks leave memory together and their segments carry pre-merged blocks: windows read those
/// instead of the buckets, and every answer must still be the in-memory store's, byte for byte.
/// </summary>
public sealed class PremergedBlockTests() : SegmentedStoreTests(bucketsPerSpan: 6)
{
    [Fact]
    public async Task Whole_blocks_are_written_pre_merged_and_a_late_value_drops_only_its_own()
    {
        FeedThreeMinutes(lateEvery: 0);
        Assert.Contains(Shelf.Open(), s => SegmentLayout.OfBlockTier(s.Tier) is not null);
        int before = Segmented.AgedBlockCount();
        Assert.True(before > 10, $"{before} pre-merged blocks");
        await AssertSameAsync(new TimeWindow(Begin - 30_000, Now), []);

        // Three minutes late: its bucket lives in a segment of the coarsest tier under a pre-merged block, which no longer stands.
        Append(StoreFixture.Batch("parcels.scan.latency", [42.0], Begin + 1_000, ("depot", "north")));

        Assert.True(Segmented.AgedBlockCount() == before - 1, $"{Segmented.AgedBlockCount()} blocks after the late value, {before} before");
        await AssertSameAsync(new TimeWindow(Begin - 30_000, Now), ["depot"]);
    }
}
