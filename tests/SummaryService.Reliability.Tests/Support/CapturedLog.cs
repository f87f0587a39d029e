using System.Text;
using Microsoft.Extensions.Logging;

namespace SummaryService.Reliability.Tests.Support;

/// <summary>
/// Every log line the server writes, formatted the way the console logger prints it (level,
/// category, message, then the exception with its stack trace), so a test can state how many bytes
/// an operator's disk would take. The text itself is kept up to a cap for failure messages.
/// </summary>
internal sealed class CapturedLog : ILoggerProvider
{
    private const int KeptChars = 1 << 20;
    private readonly StringBuilder _text = new();
    private long _bytes;
    private long _lines;

    /// <summary>Bytes written so far, as UTF-8.</summary>
    public long Bytes => Interlocked.Read(ref _bytes);

    /// <summary>Entries written so far.</summary>
    public long Entries => Interlocked.Read(ref _lines);

    /// <summary>The first megabyte of what was written.</summary>
    public string Text
    {
        get
        {
            lock (_text)
            {
                return _text.ToString();
            }
        }
    }

    /// <summary>Entries whose text contains <paramref name="fragment"/>.</summary>
    public int Count(string fragment)
    {
        string text = Text;
        int count = 0;
        for (int at = text.IndexOf(fragment, StringComparison.Ordinal); at >= 0; at = text.IndexOf(fragment, at + fragment.Length, StringComparison.Ordinal))
        {
            count++;
        }

        return count;
    }

    public ILogger CreateLogger(string categoryName) => new Writer(this, categoryName);

    public void Dispose()
    {
    }

    private void Write(string entry)
    {
        Interlocked.Add(ref _bytes, Encoding.UTF8.GetByteCount(entry));
        Interlocked.Increment(ref _lines);
        lock (_text)
        {
            if (_text.Length < KeptChars)
            {
                _text.Append(entry);
            }
        }
    }

    private sealed class Writer(CapturedLog log, string category) : ILogger
    {
        public IDisposable? BeginScope<TState>(TState state)
            where TState : notnull => null;

        public bool IsEnabled(LogLevel logLevel) => logLevel != LogLevel.None;

        public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter)
        {
            // The console logger's simple format: "warn: Category[id]" on one line, the message indented on the next.
            string entry = $"{logLevel}: {category}[{eventId.Id}]\n      {formatter(state, exception)}\n{(exception is null ? "" : exception + "\n")}";
            log.Write(entry);
        }
    }
}
