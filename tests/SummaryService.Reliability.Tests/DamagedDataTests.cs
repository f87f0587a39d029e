using Grpc.Health.V1;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Reliability.Tests;

/// <summary>
/// The server started on a data directory damaged in the ways disks and crashes damage files: it
/// starts, says in its log what it dropped, reports healthy and answers queries from what it kept.
/// (Every offset of every file is tried against the store itself in EveryOffsetDamageTests.)
/// </summary>
public sealed class DamagedDataTests(CrashedDataDirectory crashed) : IClassFixture<CrashedDataDirectory>
{
    /// <summary>Each damage, the values a query must still find (null: any number, the damage being random) and what the log must say.</summary>
    public static TheoryData<string, int?, string> Damages => new()
    {
        { "newest shard file cut in half", 3000, "is unusable" },
        { "manifest emptied", 3000, "is unusable" },
        { "log cut mid-record", 2900, "cutting" },
        { "garbage after the log", 3000, "cutting" },
        { "bit flips in every file", null, "is unusable" },
        { "stray files and directories", 3000, "Recovered series store" },
    };

    [Theory]
    [MemberData(nameof(Damages))]
    public async Task The_server_starts_on_damaged_files_reports_the_loss_and_answers(string damage, int? expectedValues, string reported)
    {
        using var data = new TempDirectory();
        TempDirectory.Copy(crashed.Path, data.Path);
        Damage(data.Path, damage, new Random(damage.Length));

        await using var server = LoopbackServer.Start(dataDirectory: data.Path);
        var health = await new Health.HealthClient(server.Channel).CheckAsync(new HealthCheckRequest());
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, health.Status);
        Assert.Contains(reported, server.Log.Text, StringComparison.Ordinal);

        var catalogue = await new Query.QueryClient(server.Channel).CatalogueAsync(new CatalogueRequest { Metric = "damage.kept" });
        long values = catalogue.Series.Sum(s => (long)s.Count);
        if (expectedValues is { } expected)
        {
            Assert.Equal(expected, values);
        }

        Assert.InRange(values, 0, 3000);

        // And it takes new data.
        var pushed = await new Ingest.IngestClient(server.Channel).PushAsync(new Batch { Metric = "damage.after", Values = { 1, 2, 3 } });
        Assert.Equal(3ul, pushed.Accepted);
    }

    private static void Damage(string directory, string damage, Random random)
    {
        string snapshots = Path.Combine(directory, "snapshots");
        string newest = Directory.EnumerateDirectories(snapshots).Max()!;
        string segment = Directory.EnumerateFiles(Path.Combine(directory, "wal")).Max()!;
        switch (damage)
        {
            case "newest shard file cut in half":
                string shard = Directory.EnumerateFiles(newest, "shard-*").OrderByDescending(f => new FileInfo(f).Length).First();
                File.WriteAllBytes(shard, File.ReadAllBytes(shard)[..(int)(new FileInfo(shard).Length / 2)]);
                break;
            case "manifest emptied":
                File.WriteAllBytes(Path.Combine(newest, "manifest.bin"), []);
                break;
            case "log cut mid-record":
                File.WriteAllBytes(segment, File.ReadAllBytes(segment)[..(int)(new FileInfo(segment).Length - 7)]);
                break;
            case "garbage after the log":
                var garbage = new byte[4096];
                random.NextBytes(garbage);
                File.AppendAllText(segment, "");
                using (var stream = new FileStream(segment, FileMode.Append))
                {
                    stream.Write(garbage);
                }

                break;
            case "bit flips in every file":
                foreach (string file in Directory.EnumerateFiles(directory, "*", SearchOption.AllDirectories))
                {
                    byte[] bytes = File.ReadAllBytes(file);
                    if (bytes.Length > 0)
                    {
                        bytes[random.Next(bytes.Length)] ^= (byte)(1 << random.Next(8));
                        File.WriteAllBytes(file, bytes);
                    }
                }

                break;
            default:
                Directory.CreateDirectory(Path.Combine(snapshots, "99999999999999999999"));
                Directory.CreateDirectory(Path.Combine(snapshots, "not-a-generation"));
                File.WriteAllText(Path.Combine(snapshots, "00000000000000000077"), "a file where a generation directory belongs");
                Directory.CreateDirectory(Path.Combine(directory, "wal", "00000000000000000001.log"));
                File.WriteAllText(Path.Combine(directory, "wal", "notes.txt"), "not a segment");
                break;
        }
    }
}

/// <summary>
/// A data directory as SIGKILL leaves it, made once for all damage cases: 1000 values, a snapshot,
/// 1000 more, a second snapshot, then 1000 values only in the log (ten batches of 100 each time).
/// </summary>
public sealed class CrashedDataDirectory : IAsyncLifetime
{
    private readonly TempDirectory _directory = new();

    public string Path => _directory.Path;

    public async Task InitializeAsync()
    {
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string>
        {
            ["Persistence__DataDirectory"] = Path,
            ["Persistence__SnapshotInterval"] = "01:00:00",
            ["Logging__LogLevel__Default"] = "Warning",
        });
        using var channel = Grpc.Net.Client.GrpcChannel.ForAddress(server.Address);
        var ingest = new Ingest.IngestClient(channel);
        for (int phase = 0; phase < 3; phase++)
        {
            for (int i = 0; i < 10; i++)
            {
                var batch = new Batch { Metric = "damage.kept", Labels = { ["part"] = $"p{i % 4}" } };
                batch.Values.AddRange(Enumerable.Range(0, 100).Select(v => (double)v));
                await ingest.PushAsync(batch);
            }

            if (phase < 2)
            {
                await new Admin.AdminClient(channel).WriteSnapshotAsync(new WriteSnapshotRequest());
            }
        }

        server.Kill();
    }

    public Task DisposeAsync()
    {
        _directory.Dispose();
        return Task.CompletedTask;
    }
}
