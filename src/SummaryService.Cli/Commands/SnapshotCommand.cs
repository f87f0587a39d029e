using System.CommandLine;
using Spectre.Console;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Rendering;
using SummaryService.Readable;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary><c>snapshot</c>: asks the server to write a snapshot now (before maintenance, or to check persistence works).</summary>
public static class SnapshotCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("snapshot", "Write a snapshot of the store now and report its generation, series, size and time taken.");
        var json = CommonOptions.Json();
        command.Add(json);
        runner.Bind(command, async run =>
        {
            WriteSnapshotReply reply = await run.Server.Admin.WriteSnapshotAsync(new WriteSnapshotRequest(), ServerConnection.Unary(run.Cancellation));
            if (run.Parse.GetValue(json))
            {
                JsonOutput.Write(run.Console, reply);
            }
            else
            {
                run.Console.Out.WriteLine($"snapshot generation {reply.Generation}: {reply.Series} series, {HoldingsCommand.Bytes(reply.Bytes)}, in {DurationText.Format(reply.Elapsed.ToTimeSpan())}");
            }

            return ExitCodes.Ok;
        });
        return command;
    }
}
