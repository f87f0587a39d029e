using System.Net;
using System.Net.Sockets;

namespace SummaryService.Client.Tests.Support;

/// <summary>
/// A loopback TCP relay between the recorder and the server that can swallow the server's replies and
/// then cut every connection: the one failure where the server has applied batches the producer never
/// heard about, so only the producer sequence keeps a resend from being counted twice.
/// </summary>
internal sealed class ReplyCuttingProxy : IAsyncDisposable
{
    private readonly TcpListener _listener = new(IPAddress.Loopback, 0);
    private readonly IPEndPoint _target;
    private readonly CancellationTokenSource _stop = new();
    private readonly List<TcpClient> _open = [];
    private readonly Task _accepting;
    private volatile bool _swallowReplies;

    public ReplyCuttingProxy(int targetPort)
    {
        _target = new IPEndPoint(IPAddress.Loopback, targetPort);
        _listener.Start();
        _accepting = AcceptAsync();
    }

    public Uri Address => new($"http://127.0.0.1:{((IPEndPoint)_listener.LocalEndpoint).Port}");

    /// <summary>From now on, bytes from the server are read and thrown away.</summary>
    public void SwallowReplies() => _swallowReplies = true;

    /// <summary>Closes every relayed connection and relays normally again for new ones.</summary>
    public void CutAndHeal()
    {
        lock (_open)
        {
            foreach (TcpClient client in _open)
            {
                client.Close();
            }

            _open.Clear();
            _swallowReplies = false;
        }
    }

    public async ValueTask DisposeAsync()
    {
        await _stop.CancelAsync();
        _listener.Stop();
        CutAndHeal();
        try
        {
            await _accepting;
        }
        catch (Exception ex) when (ex is OperationCanceledException or SocketException or ObjectDisposedException)
        {
            // Stopped.
        }

        _stop.Dispose();
    }

    private async Task AcceptAsync()
    {
        while (!_stop.IsCancellationRequested)
        {
            TcpClient downstream = await _listener.AcceptTcpClientAsync(_stop.Token);
            var upstream = new TcpClient();
            await upstream.ConnectAsync(_target, _stop.Token);
            lock (_open)
            {
                _open.Add(downstream);
                _open.Add(upstream);
            }

            _ = PumpAsync(downstream.GetStream(), upstream.GetStream(), replies: false);
            _ = PumpAsync(upstream.GetStream(), downstream.GetStream(), replies: true);
        }
    }

    private async Task PumpAsync(NetworkStream from, NetworkStream to, bool replies)
    {
        byte[] buffer = new byte[16 * 1024];
        try
        {
            while (true)
            {
                int read = await from.ReadAsync(buffer, _stop.Token);
                if (read == 0)
                {
                    break;
                }

                if (!(replies && _swallowReplies))
                {
                    await to.WriteAsync(buffer.AsMemory(0, read), _stop.Token);
                }
            }
        }
        catch (Exception ex) when (ex is IOException or ObjectDisposedException or OperationCanceledException or SocketException)
        {
            // One side closed or was cut.
        }
        finally
        {
            from.Close();
            to.Close();
        }
    }
}
