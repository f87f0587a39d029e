using System.CommandLine;
using Spectre.Console;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Rendering;
using SummaryService.Readable;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary><c>holdings</c>: what the server holds — series, buckets and estimated memory per tier and per shard.</summary>
public static class HoldingsCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("holdings", "Show what the server holds: series, buckets, estimated memory per tier and shard, durability.");
        var shards = new Option<bool>("--shards") { Description = "Also list every shard." };
        var json = CommonOptions.Json();
        command.Add(shards);
        command.Add(json);
        runner.Bind(command, async run =>
        {
            HoldingsReply reply = await run.Server.Admin.HoldingsAsync(new HoldingsRequest(), ServerConnection.Unary(run.Cancellation));
            if (run.Parse.GetValue(json))
            {
                JsonOutput.Write(run.Console, reply);
                return ExitCodes.Ok;
            }

            IAnsiConsole console = run.Console.Out;
            console.WriteLine($"{reply.Series} series, {reply.Buckets} buckets, about {Bytes(reply.EstimatedBytes)} of sketches; durability {reply.Durability}; {reply.ProducerMarks} producer marks");
            var tiers = new Table().Border(TableBorder.Rounded);
            tiers.AddColumn(new TableColumn(new Text("tier (bucket width)")));
            tiers.AddColumn(new TableColumn(new Text("buckets")).RightAligned());
            tiers.AddColumn(new TableColumn(new Text("estimated memory")).RightAligned());
            foreach (TierHoldings tier in reply.Tiers)
            {
                tiers.AddRow(new Text(DurationText.Format(tier.BucketWidth.ToTimeSpan())), new Text(Count(tier.Buckets)), new Text(Bytes(tier.EstimatedBytes)));
            }

            console.Write(tiers);
            if (run.Parse.GetValue(shards))
            {
                var table = new Table().Border(TableBorder.Rounded);
                table.AddColumn(new TableColumn(new Text("shard")).RightAligned());
                table.AddColumn(new TableColumn(new Text("series")).RightAligned());
                table.AddColumn(new TableColumn(new Text("buckets")).RightAligned());
                table.AddColumn(new TableColumn(new Text("estimated memory")).RightAligned());
                foreach (ShardHoldings shard in reply.Shards)
                {
                    table.AddRow(new Text(Count(shard.Shard)), new Text(Count(shard.Series)), new Text(Count(shard.Buckets)), new Text(Bytes(shard.EstimatedBytes)));
                }

                console.Write(table);
            }

            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>Bytes in the largest binary unit that keeps the number at or above 1.</summary>
    public static string Bytes(ulong bytes)
    {
        string[] units = ["B", "KiB", "MiB", "GiB", "TiB"];
        double value = bytes;
        int unit = 0;
        while (value >= 1024 && unit < units.Length - 1)
        {
            value /= 1024;
            unit++;
        }

        return $"{Figures.Of(Math.Round(value, 1))} {units[unit]}";
    }

    private static string Count(ulong n) => n.ToString(System.Globalization.CultureInfo.InvariantCulture);
}
