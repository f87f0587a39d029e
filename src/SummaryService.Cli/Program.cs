using System.Runtime.InteropServices;
using SummaryService.Cli;

// Ctrl+C and SIGTERM end watches and the demo's live stream cleanly instead of killing the process.
using var stop = new CancellationTokenSource();
Console.CancelKeyPress += (_, e) =>
{
    e.Cancel = true;
    stop.Cancel();
};
using var terminate = PosixSignalRegistration.Create(PosixSignal.SIGTERM, context =>
{
    context.Cancel = true;
    stop.Cancel();
});

return await CliApp.RunAsync(args, CliConsole.FromProcess(), stop.Token).ConfigureAwait(false);
