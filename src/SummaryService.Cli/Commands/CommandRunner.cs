using System.CommandLine;
using Grpc.Core;
using SummaryService.Cli.Connection;

namespace SummaryService.Cli.Commands;

/// <summary>
/// Runs a command's body and turns every expected failure into one line on standard error and a
/// documented exit code, so no person or script ever sees a stack trace for a mistake or an outage.
/// </summary>
public sealed class CommandRunner(CliConsole console, CommonOptions common, TimeProvider time)
{
    /// <summary>The console commands write to.</summary>
    public CliConsole Console => console;

    /// <summary>
    /// Makes <paramref name="body"/> the action of <paramref name="command"/>; a refusal from the server
    /// is reported with its fields named as <paramref name="fields"/> says (the command's own options).
    /// </summary>
    public void Bind(Command command, Func<Invocation, Task<int>> body, FieldNames? fields = null)
    {
        ArgumentNullException.ThrowIfNull(command);
        ArgumentNullException.ThrowIfNull(body);
        command.SetAction((parse, cancellationToken) => RunAsync(parse, body, fields ?? FieldNames.None, cancellationToken));
    }

    private async Task<int> RunAsync(ParseResult parse, Func<Invocation, Task<int>> body, FieldNames fields, CancellationToken cancellationToken)
    {
        ServerConnection? server = null;
        try
        {
            server = ServerConnection.Open(parse.GetValue(common.Server)!, parse.GetValue(common.ApiKey));
            return await body(new Invocation(parse, console, server, time, cancellationToken)).ConfigureAwait(false);
        }
        catch (UsageException ex)
        {
            return Fail(ExitCodes.Usage, $"error: {ex.Message}");
        }
        catch (RpcException ex) when (cancellationToken.IsCancellationRequested && ex.StatusCode == StatusCode.Cancelled)
        {
            return ExitCodes.Ok;
        }
        catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
        {
            return ExitCodes.Ok;
        }
        catch (RpcException ex)
        {
            var (code, line) = FailureReport.Of(ex, server!.Address, fields);
            return Fail(code, line);
        }
        catch (IOException ex)
        {
            return Fail(ExitCodes.Usage, $"error: {ex.Message}");
        }
        catch (UnauthorizedAccessException ex)
        {
            return Fail(ExitCodes.Usage, $"error: {ex.Message}");
        }
        catch (Exception ex) when (ex is InvalidOperationException or HttpRequestException or FormatException)
        {
            // Not a mistake of the caller's: still one line, with the exception's type so it can be reported.
            return Fail(ExitCodes.ServerError, $"error: unexpected failure ({ex.GetType().Name}): {ex.Message}");
        }
        finally
        {
            server?.Dispose();
        }
    }

    private int Fail(int code, string line)
    {
        console.Error.WriteLine(line);
        return code;
    }
}
