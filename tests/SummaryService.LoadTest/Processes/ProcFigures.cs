using System.Globalization;

namespace SummaryService.LoadTest.Processes;

/// <summary>
/// Figures Linux keeps per process and per machine under /proc (proc(5)): CPU time from
/// /proc/PID/stat, peak and current resident memory from /proc/PID/status, and the machine's
/// busy time from /proc/stat, so the report can say how much of the 2 cores others were using.
/// </summary>
public static class ProcFigures
{
    /// <summary>Clock ticks per second of the stat files; USER_HZ is 100 on Linux (common practice, from memory).</summary>
    public const double TicksPerSecond = 100.0;

    /// <summary>User plus system CPU seconds of a process (fields 14 and 15 of /proc/PID/stat).</summary>
    public static double CpuSeconds(int pid)
    {
        string stat = File.ReadAllText($"/proc/{pid}/stat");
        // The command name (field 2) is parenthesized and may hold spaces; fields are counted after it.
        string[] rest = stat[(stat.LastIndexOf(')') + 2)..].Split(' ');
        long user = long.Parse(rest[11], CultureInfo.InvariantCulture);
        long system = long.Parse(rest[12], CultureInfo.InvariantCulture);
        return (user + system) / TicksPerSecond;
    }

    /// <summary>A line of /proc/PID/status in bytes, e.g. VmHWM (peak resident set) or VmRSS.</summary>
    public static long StatusBytes(int pid, string field)
    {
        foreach (string line in File.ReadLines($"/proc/{pid}/status"))
        {
            if (line.StartsWith(field + ":", StringComparison.Ordinal))
            {
                string kb = line[(field.Length + 1)..].Trim().Split(' ')[0];
                return long.Parse(kb, CultureInfo.InvariantCulture) * 1024;
            }
        }

        throw new InvalidOperationException($"/proc/{pid}/status has no {field} line.");
    }

    /// <summary>Busy and total CPU seconds of the whole machine, summed over cores (first line of /proc/stat).</summary>
    public static (double Busy, double Total) MachineCpuSeconds()
    {
        string first = File.ReadLines("/proc/stat").First();
        string[] parts = first.Split(' ', StringSplitOptions.RemoveEmptyEntries);
        double total = 0;
        double idle = 0;
        for (int i = 1; i < parts.Length && i <= 8; i++)
        {
            double ticks = long.Parse(parts[i], CultureInfo.InvariantCulture);
            total += ticks;
            if (i is 4 or 5)
            {
                idle += ticks; // idle and iowait
            }
        }

        return ((total - idle) / TicksPerSecond, total / TicksPerSecond);
    }

    /// <summary>The 1-minute load average.</summary>
    public static double LoadAverage() => double.Parse(File.ReadAllText("/proc/loadavg").Split(' ')[0], CultureInfo.InvariantCulture);
}
