using System.Globalization;
using System.Text;
using Microsoft.Extensions.Options;
using SummaryService.Readable;
using SummaryService.Server.Configuration;
using SummaryService.Server.Validation;

namespace SummaryService.Server.Diagnostics;

/// <summary>
/// Refused and failed calls, logged per client at most once per interval with counts: the first
/// refusal from a client is logged at once, later ones are counted and summarized ("214 calls
/// refused in the last 10s: InvalidArgument 200, NotFound 14; latest: …"). A client sending
/// garbage as fast as it can costs one line per interval, never a stack trace per message.
/// </summary>
/// <remarks>
/// Clients are told apart by address and API key name. At most <see cref="MaxClients"/> clients
/// are tracked; refusals from further ones share one "other clients" entry, so memory stays
/// bounded however many addresses a flood comes from. Exceptions that are server defects rather
/// than refusals get their stack trace logged once per kind of exception and call (<see cref="FirstFailure"/>).
/// </remarks>
public sealed class RefusalLog(TimeProvider time, IOptions<ServerSettings> settings, ILogger<RefusalLog> logger)
{
    /// <summary>Key of a request item holding the text of its refusal, for calls whose status does not carry it (the JSON routes).</summary>
    public const string DetailItem = "summary.refusal";

    /// <summary>Clients tracked individually.</summary>
    public const int MaxClients = 1000;

    private const int MaxFailureKinds = 1000;
    private const string OtherClients = "other clients";

    private readonly object _gate = new();
    private readonly Dictionary<string, ClientRefusals> _clients = new(StringComparer.Ordinal);
    private readonly HashSet<string> _failureKinds = new(StringComparer.Ordinal);

    private TimeSpan Interval => settings.Value.RefusalLogInterval;

    /// <summary>Counts one refused call (<paramref name="outcome"/> is the gRPC status name, or the HTTP status of a JSON route); logs now if this client's last line is an interval old.</summary>
    public void Refused(string client, string call, string outcome, string detail)
    {
        ArgumentNullException.ThrowIfNull(client);
        long now = time.GetTimestamp();
        string? line = null;
        lock (_gate)
        {
            if (!_clients.TryGetValue(client, out ClientRefusals? refusals))
            {
                client = _clients.Count < MaxClients ? client : OtherClients;
                refusals = _clients.TryGetValue(client, out var shared) ? shared : _clients[client] = new ClientRefusals(now);
            }

            refusals.Count(outcome, call, detail, now);
            if (refusals.LastLogged is null || time.GetElapsedTime(refusals.LastLogged.Value, now) >= Interval)
            {
                line = refusals.TakeSummary(client, now, time);
            }
        }

        Write(line);
    }

    /// <summary>Logs the summaries that have waited an interval, and forgets clients quiet for longer; called periodically.</summary>
    public void Flush()
    {
        long now = time.GetTimestamp();
        var lines = new List<string>();
        lock (_gate)
        {
            foreach (var (client, refusals) in _clients.ToArray())
            {
                bool due = refusals.LastLogged is null || time.GetElapsedTime(refusals.LastLogged.Value, now) >= Interval;
                if (refusals.Pending > 0 && due)
                {
                    lines.Add(refusals.TakeSummary(client, now, time));
                }
                else if (refusals.Pending == 0 && due)
                {
                    _clients.Remove(client);
                }
            }
        }

        foreach (string line in lines)
        {
            Write(line);
        }
    }

    /// <summary>True the first time this kind of exception escapes this call (the caller then logs its stack trace), false afterwards.</summary>
    public bool FirstFailure(string call, Exception exception)
    {
        ArgumentNullException.ThrowIfNull(exception);
        lock (_gate)
        {
            return _failureKinds.Count < MaxFailureKinds && _failureKinds.Add($"{call} {exception.GetType().FullName} {exception.TargetSite}");
        }
    }

    private void Write(string? line)
    {
        if (line is not null)
        {
            logger.LogWarning("{Refusals}", line);
        }
    }

    private sealed class ClientRefusals(long since)
    {
        private readonly Dictionary<string, long> _byCode = new(StringComparer.Ordinal);
        private long _since = since;
        private string _latest = "";

        public long? LastLogged { get; private set; }

        public long Pending { get; private set; }

        public void Count(string outcome, string call, string detail, long now)
        {
            if (Pending == 0)
            {
                _since = now;
            }

            Pending++;
            _byCode[outcome] = _byCode.GetValueOrDefault(outcome) + 1;
            _latest = $"{call} {outcome}: {detail}";
        }

        public string TakeSummary(string client, long now, TimeProvider time)
        {
            var line = new StringBuilder();
            line.Append(CultureInfo.InvariantCulture, $"{Pending} call{(Pending == 1 ? "" : "s")} from {client} refused");
            if (LastLogged is not null)
            {
                line.Append(CultureInfo.InvariantCulture, $" in the last {DurationText.Format(TimeSpan.FromSeconds(Math.Round(time.GetElapsedTime(_since, now).TotalSeconds)))}");
            }

            line.Append(" (").AppendJoin(", ", _byCode.OrderByDescending(c => c.Value).Select(c => $"{c.Key} {c.Value}")).Append("); latest: ").Append(WireText.Message(_latest));
            Pending = 0;
            _byCode.Clear();
            LastLogged = now;
            return line.ToString();
        }
    }
}
