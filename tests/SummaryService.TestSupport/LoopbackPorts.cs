using System.Globalization;
using System.Net;
using System.Net.Sockets;

namespace SummaryService.TestSupport;

/// <summary>
/// Loopback ports for servers that tests start, chosen so that nothing else on the machine takes
/// them between the choice and the server's bind.
/// </summary>
/// <remarks>
/// A port the kernel hands out for a listener bound to port 0 comes from the ephemeral range, the
/// same range every outgoing connection's local port is drawn from. Once the probe releases it,
/// any client socket on the machine (another test assembly running in parallel, a package
/// restore) may take it as its local port, and a server told to bind it — or to bind it again on
/// a restart — fails with "address already in use". So ports are drawn at random from below the
/// ephemeral range, which the kernel never assigns by itself, are probed before they are handed
/// out, and are never handed out twice by one process.
/// </remarks>
public static class LoopbackPorts
{
    /// <summary>The lowest port drawn: clear of the well-known and most registered service ports.</summary>
    private const int LowestPort = 10_000;

    private static readonly HashSet<int> HandedOut = [];
    private static readonly (int Low, int High) Ephemeral = ReadEphemeralRange();

    /// <summary>A loopback TCP port that nothing listens on and that the kernel will not give to an outgoing connection.</summary>
    public static int Take()
    {
        int highest = Math.Max(LowestPort + 1_000, Ephemeral.Low - 1);
        for (int attempt = 0; attempt < 1_000; attempt++)
        {
            int candidate = Random.Shared.Next(LowestPort, highest + 1);
            lock (HandedOut)
            {
                if (HandedOut.Contains(candidate) || !IsFree(candidate))
                {
                    continue;
                }

                HandedOut.Add(candidate);
                return candidate;
            }
        }

        throw new InvalidOperationException($"No free loopback port between {LowestPort} and {highest} after 1,000 draws.");
    }

    private static bool IsFree(int port)
    {
        try
        {
            using var listener = new TcpListener(IPAddress.Loopback, port);
            listener.Start();
            return true;
        }
        catch (SocketException)
        {
            return false;
        }
    }

    /// <summary>
    /// The kernel's ephemeral port range on Linux; elsewhere the Linux default 32768–60999 (from
    /// memory: the kernel's documented default for net.ipv4.ip_local_port_range).
    /// </summary>
    private static (int Low, int High) ReadEphemeralRange()
    {
        const string RangeFile = "/proc/sys/net/ipv4/ip_local_port_range";
        string[] parts = File.Exists(RangeFile) ? File.ReadAllText(RangeFile).Split((char[])['\t', ' ', '\n'], StringSplitOptions.RemoveEmptyEntries) : [];
        return parts.Length == 2
            && int.TryParse(parts[0], NumberStyles.None, CultureInfo.InvariantCulture, out int low)
            && int.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out int high)
            ? (low, high)
            : (32_768, 60_999);
    }
}
