using SummaryService.Cli.Tests.Support;
using SummaryService.Contract.V1;
using SummaryService.TestSupport;

namespace SummaryService.Cli.Tests.EndToEnd;

/// <summary>send from every source, idempotent producers, catalogue, holdings and snapshot against the real server.</summary>
[Collection(nameof(ServerCollection))]
public sealed class IngestAndAdminTests(ServerFixture server)
{
    [Fact]
    public async Task Send_reads_csv_ndjson_and_standard_input_with_their_own_times()
    {
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        using var data = new TempDirectory();
        string csv = Path.Combine(data.Path, "old.csv");
        string ndjson = Path.Combine(data.Path, "recent.ndjson");
        await File.WriteAllTextAsync(csv, $"value,time\n10,{Samples.Iso(now - 3_000_000)}\n11,{now - 3_000_000}\n12,{Samples.Iso(now - 3_000_000)}\n");
        await File.WriteAllTextAsync(ndjson, "{\"value\": 1.5}\n\n{\"value\": 2.5, \"time\": " + (now - 60_000) + "}\n");
        Assert.Equal(0, (await CliRun.AgainstAsync(server.Address, "send", "otterbyte.test.sources", "--file", csv)).ExitCode);
        Assert.Equal(0, (await CliRun.AgainstAsync(server.Address, "send", "otterbyte.test.sources", "-f", ndjson)).ExitCode);
        var piped = await CliRun.RunAsync(["send", "otterbyte.test.sources", "--batch-size", "2", "--server", server.Address.ToString()], stdin: "100 200\n300\n");
        Assert.Equal(0, piped.ExitCode);
        Assert.Contains("3 values in 2 batch(es)", piped.Out, StringComparison.Ordinal);

        // The CSV's values carry a time 50 minutes back: only a window over that time holds them.
        var old = (await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.sources", "--from", "now-55m", "--to", "now-45m", "--json")).Json<SummarizeReply>();
        Assert.Equal(11, Assert.Single(old.Groups).Summary.Mean, 12); // (10 + 11 + 12) / 3
        var all = (await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.sources", "--last", "1h", "--json")).Json<SummarizeReply>();
        Assert.Equal(8ul, Assert.Single(all.Groups).Summary.Count);
    }

    [Fact]
    public async Task A_repeated_producer_sequence_is_not_counted_twice()
    {
        string[] args = ["send", "otterbyte.test.repeat", "1", "2", "3", "4", "5", "--batch-size", "2", "--producer", "cli-test-repeat"];
        var first = await CliRun.AgainstAsync(server.Address, args);
        var again = await CliRun.AgainstAsync(server.Address, args);
        Assert.Contains("5 accepted", first.Out, StringComparison.Ordinal);
        Assert.Contains("0 accepted, 3 batch(es) already applied", again.Out, StringComparison.Ordinal);
        var later = await CliRun.AgainstAsync(server.Address, [.. args, "--sequence", "4"]);
        Assert.Contains("5 accepted", later.Out, StringComparison.Ordinal);
        var reply = (await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.repeat", "--json")).Json<SummarizeReply>();
        Assert.Equal(10ul, Assert.Single(reply.Groups).Summary.Count);
    }

    [Fact]
    public async Task Catalogue_holdings_and_snapshot_report_what_the_server_holds()
    {
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.catalogue", "1", "2", "-l", "region=west", "-l", "route=/a"]);
        var catalogue = (await CliRun.AgainstAsync(server.Address, "catalogue", "otterbyte.test.catalogue", "--json")).Json<CatalogueReply>();
        CatalogueEntry entry = Assert.Single(catalogue.Series);
        Assert.Equal("west", entry.Labels["region"]);
        Assert.Equal(2ul, entry.Count);
        var table = await CliRun.AgainstAsync(server.Address, "catalogue");
        Assert.Contains("otterbyte.test.catalogue · region=west · route=/a", table.Out, StringComparison.Ordinal);

        var holdings = (await CliRun.AgainstAsync(server.Address, "holdings", "--json")).Json<HoldingsReply>();
        Assert.True(holdings.Series >= 1);
        Assert.Equal("Wal", holdings.Durability);
        Assert.Equal(4, holdings.Tiers.Count);
        var holdingsTable = await CliRun.AgainstAsync(server.Address, "holdings", "--shards");
        Assert.Contains("durability Wal", holdingsTable.Out, StringComparison.Ordinal);
        Assert.Contains($"{holdings.ProducerMarks} producer marks", holdingsTable.Out, StringComparison.Ordinal);
        Assert.Matches(@"│ \d+(ms|s|m|h|d)+ +│", holdingsTable.Out); // bucket widths in the duration syntax (10s, 1m), not 00:00:10
        Assert.DoesNotContain("00:0", holdingsTable.Out, StringComparison.Ordinal);

        var snapshot = (await CliRun.AgainstAsync(server.Address, "snapshot", "--json")).Json<WriteSnapshotReply>();
        Assert.True(snapshot.Generation >= 1);
        Assert.True(snapshot.Series >= 1);
        var again = await CliRun.AgainstAsync(server.Address, "snapshot");
        var match = System.Text.RegularExpressions.Regex.Match(again.Out, @"snapshot generation (\d+): \d+ series");
        Assert.True(match.Success, again.Out);
        Assert.True(ulong.Parse(match.Groups[1].Value, System.Globalization.CultureInfo.InvariantCulture) > snapshot.Generation); // periodic snapshots may add more
    }
}
