using System.CommandLine;
using Spectre.Console;
using Grpc.Core;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Input;
using SummaryService.Cli.Parsing;
using SummaryService.Cli.Rendering;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary>
/// <c>send</c>: pushes values from the arguments, a file (plain, CSV or NDJSON) or standard input, in
/// batches over one push stream. With <c>--producer</c> every batch carries the next sequence number, so
/// re-running the same command with the same producer and start sequence counts nothing twice.
/// </summary>
public static class SendCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("send", "Push values from arguments, a file (.csv, .ndjson, plain) or standard input, in batches.");
        var metric = CommonOptions.Metric();
        var values = new Argument<string[]>("values") { Description = "Values to push; when none are given, --file or standard input is read.", Arity = ArgumentArity.ZeroOrMore };
        var labels = CommonOptions.Labels("--label", "Label of the series (name=value); repeat.");
        var file = new Option<string?>("--file", "-f") { Description = "Read values from this file; '-' for standard input.", HelpName = "path" };
        var format = new Option<ValueFormat?>("--format") { Description = "Layout of the file or standard input: Plain, Csv or Ndjson (default from the file extension, else Plain)." };
        var at = new Option<string?>("--at") { Description = "Timestamp of values without their own: now-5m (five minutes ago) or ISO 8601; default now.", HelpName = "time" };
        var batchSize = new Option<int>("--batch-size") { Description = "Values per batch.", DefaultValueFactory = _ => 1000 };
        var producer = new Option<string?>("--producer") { Description = "Producer name for idempotent retries; batches then carry sequence numbers.", HelpName = "name" };
        var sequence = new Option<ulong>("--sequence") { Description = "Sequence number of the first batch (with --producer).", DefaultValueFactory = _ => 1 };
        command.Add(metric);
        command.Add(values);
        command.Add(labels);
        command.Add(file);
        command.Add(format);
        command.Add(at);
        command.Add(batchSize);
        command.Add(producer);
        command.Add(sequence);
        runner.Bind(command, async run =>
        {
            var p = run.Parse;
            Selector target = Selection.Of(p.GetValue(metric)!, p.GetValue(labels));
            int size = p.GetValue(batchSize);
            if (size < 1)
            {
                throw new UsageException($"--batch-size {size} must be at least 1.");
            }

            long batchTime = 0;
            if (p.GetValue(at) is string atText && !TimePoint.TryParse(atText, run.NowMs, out batchTime, out string atError))
            {
                throw new UsageException($"--at: {atError}");
            }

            List<TimedValue> read = Gather(run.Console, p.GetValue(values) ?? [], p.GetValue(file), p.GetValue(format));
            if (read.Count == 0)
            {
                throw new UsageException("no values to send; give them as arguments, with --file, or on standard input.");
            }

            string? name = p.GetValue(producer);
            ulong first = p.GetValue(sequence);
            var batches = Batches(target, read, size, batchTime, name, first);
            var (accepted, duplicates, failure) = await PushAsync(run, batches);
            string series = Figures.Series(target.Metric, target.LabelEquals);
            if (failure is not null)
            {
                run.Console.Error.WriteLine($"error: batch {failure.Sequence} was refused ({failure.ErrorCode}): {Fields.Translate(failure.Error, failure.ErrorField)}");
                run.Console.Out.WriteLine($"{accepted} values accepted into {series} before the refusal.");
                return failure.ErrorCode switch
                {
                    nameof(StatusCode.InvalidArgument) => ExitCodes.Usage,
                    nameof(StatusCode.PermissionDenied) or nameof(StatusCode.Unauthenticated) => ExitCodes.AuthRefused,
                    _ => ExitCodes.ServerError,
                };
            }

            string repeated = duplicates > 0 ? $", {duplicates} batch(es) already applied before and not counted again" : "";
            run.Console.Out.WriteLine($"sent {read.Count} values in {batches.Count} batch(es) to {series}: {accepted} accepted{repeated}.");
            return ExitCodes.Ok;
        }, Fields);
        return command;
    }

    /// <summary>The fields of a batch as this command's arguments and options.</summary>
    public static FieldNames Fields { get; } = new(
        ("metric", "the metric"),
        ("labels", "--label {key}"),
        ("values", "value #{n} of the batch"),
        ("time_unix_ms", "the batch's time (--at)"),
        ("value_times_unix_ms", "the time of value #{n} of the batch"));

    private static List<TimedValue> Gather(CliConsole console, string[] arguments, string? file, ValueFormat? format)
    {
        if (arguments.Length > 0)
        {
            if (file is not null)
            {
                throw new UsageException("give values either as arguments or with --file, not both.");
            }

            return ValueReader.Read(new StringReader(string.Join('\n', arguments)), ValueFormat.Plain, "arguments");
        }

        if (file is null or "-")
        {
            TextReader input = console.Input ?? throw new UsageException("no values given; pass them as arguments, with --file, or pipe them into standard input.");
            return ValueReader.Read(input, format ?? ValueFormat.Plain, "standard input");
        }

        if (!File.Exists(file))
        {
            throw new UsageException($"--file '{file}' does not exist.");
        }

        using var reader = new StreamReader(file);
        return ValueReader.Read(reader, format ?? ValueReader.FormatOf(file), file);
    }

    private static List<Batch> Batches(Selector target, List<TimedValue> values, int size, long batchTime, string? producer, ulong firstSequence)
    {
        var batches = new List<Batch>();
        bool anyOwnTime = values.Exists(v => v.TimeUnixMs != 0);
        for (int start = 0; start < values.Count; start += size)
        {
            var batch = new Batch { Metric = target.Metric, Producer = producer ?? "", TimeUnixMs = batchTime };
            batch.Labels.Add(target.LabelEquals);
            int end = Math.Min(values.Count, start + size);
            for (int i = start; i < end; i++)
            {
                batch.Values.Add(values[i].Value);
                if (anyOwnTime)
                {
                    batch.ValueTimesUnixMs.Add(values[i].TimeUnixMs != 0 ? values[i].TimeUnixMs : batchTime);
                }
            }

            batch.Sequence = producer is null ? (ulong)batches.Count + 1 : firstSequence + (ulong)batches.Count;
            batches.Add(batch);
        }

        return batches;
    }

    private static async Task<(ulong Accepted, int Duplicates, PushReply? Failure)> PushAsync(Invocation run, List<Batch> batches)
    {
        using var call = run.Server.Ingest.PushStream(cancellationToken: run.Cancellation);
        Task writing = WriteAllAsync(call.RequestStream, batches, run.Cancellation);
        ulong accepted = 0;
        int duplicates = 0;
        PushReply? failure = null;
        try
        {
            await foreach (PushReply reply in call.ResponseStream.ReadAllAsync(run.Cancellation))
            {
                if (reply.ErrorCode.Length > 0)
                {
                    failure ??= reply;
                    continue;
                }

                accepted += reply.Accepted;
                duplicates += reply.Duplicate ? 1 : 0;
            }
        }
        catch (RpcException)
        {
            // The reading side reports the call's failure; the writing side fails the same way and is observed here.
            _ = writing.ContinueWith(t => t.Exception, CancellationToken.None, TaskContinuationOptions.OnlyOnFaulted, TaskScheduler.Default);
            throw;
        }

        await writing;
        return (accepted, duplicates, failure);
    }

    private static async Task WriteAllAsync(IClientStreamWriter<Batch> stream, List<Batch> batches, CancellationToken cancellationToken)
    {
        foreach (Batch batch in batches)
        {
            cancellationToken.ThrowIfCancellationRequested();
            await stream.WriteAsync(batch, cancellationToken);
        }

        await stream.CompleteAsync();
    }
}
