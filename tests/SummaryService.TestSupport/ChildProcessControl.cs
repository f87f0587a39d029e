using System.Diagnostics;
using System.Globalization;
using Grpc.Health.V1;
using Grpc.Net.Client;

namespace SummaryService.TestSupport;

/// <summary>
/// Starting and stopping a server child process the way an operator's supervisor would: wait for
/// the standard gRPC health service to say Serving, stop with SIGTERM so the graceful shutdown (and
/// the final snapshot) runs, and kill only after a limit.
/// </summary>
public static class ChildProcessControl
{
    /// <summary>Polls the health service every 100 ms, at most <paramref name="attempts"/> times.</summary>
    /// <param name="process">The child; its exit ends the wait with an error.</param>
    /// <param name="channelFactory">A channel to the child's gRPC endpoint.</param>
    /// <param name="output">What the child printed, for the error message.</param>
    /// <param name="attempts">Polls before giving up.</param>
    /// <param name="cancellationToken">Stops the wait.</param>
    public static Task WaitServingAsync(Process process, Func<GrpcChannel> channelFactory, Func<string> output, int attempts, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(process);
        ArgumentNullException.ThrowIfNull(output);
        return WaitServingAsync(
            () => Task.FromResult(process.HasExited ? $"The server exited with {process.ExitCode}" : null),
            channelFactory,
            () => Task.FromResult(output()),
            attempts,
            cancellationToken);
    }

    /// <summary>Polls the health service every 100 ms, at most <paramref name="attempts"/> times, for a server in a process or a container.</summary>
    /// <param name="ended">Says why the server can no longer answer (it exited), or null while it runs; ends the wait with an error.</param>
    /// <param name="channelFactory">A channel to the server's gRPC endpoint.</param>
    /// <param name="output">What the server printed, for the error message.</param>
    /// <param name="attempts">Polls before giving up.</param>
    /// <param name="cancellationToken">Stops the wait.</param>
    public static async Task WaitServingAsync(Func<Task<string?>> ended, Func<GrpcChannel> channelFactory, Func<Task<string>> output, int attempts, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(ended);
        ArgumentNullException.ThrowIfNull(channelFactory);
        ArgumentNullException.ThrowIfNull(output);
        using GrpcChannel channel = channelFactory();
        var health = new Health.HealthClient(channel);
        for (int attempt = 0; attempt < attempts; attempt++)
        {
            if (await ended().ConfigureAwait(false) is { } reason)
            {
                throw new InvalidOperationException($"{reason}:\n{await output().ConfigureAwait(false)}");
            }

            try
            {
                var reply = await health.CheckAsync(new HealthCheckRequest(), deadline: DateTime.UtcNow.AddSeconds(2), cancellationToken: cancellationToken).ConfigureAwait(false);
                if (reply.Status == HealthCheckResponse.Types.ServingStatus.Serving)
                {
                    return;
                }
            }
            catch (Grpc.Core.RpcException)
            {
                // Not listening yet.
            }

            await Task.Delay(100, cancellationToken).ConfigureAwait(false);
        }

        throw new TimeoutException($"The server did not become healthy within {attempts / 10} s:\n{await output().ConfigureAwait(false)}");
    }

    /// <summary>SIGTERM, then waits up to <paramref name="limit"/> for the graceful stop, then kills the process tree.</summary>
    public static async Task StopAsync(Process process, TimeSpan limit)
    {
        ArgumentNullException.ThrowIfNull(process);
        if (process.HasExited)
        {
            return;
        }

        using (var kill = Process.Start("kill", ["-TERM", process.Id.ToString(CultureInfo.InvariantCulture)]))
        {
            await kill.WaitForExitAsync().ConfigureAwait(false);
        }

        using var timeout = new CancellationTokenSource(limit);
        try
        {
            await process.WaitForExitAsync(timeout.Token).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
        }
    }
}
