using System.Globalization;
using System.Text;
using Grpc.Core;

namespace SummaryService.Server.Validation;

/// <summary>
/// Makes text that echoes a caller's input safe to send back and to log. Status messages and the
/// field trailer quote names and values from the request, which may hold control characters,
/// invalid code points or megabytes of text: HTTP/2 refuses such header values (the call then failed
/// with an unclear status), and a log line must not be split or swollen by them.
/// </summary>
public static class WireText
{
    /// <summary>Longest status message sent; the middle of a longer one is elided, keeping the value's start and the advice at the end.</summary>
    public const int MaxMessageChars = 1024;

    /// <summary>Longest field path sent in the trailer.</summary>
    public const int MaxFieldChars = 200;

    /// <summary>A status message: control and formatting characters escaped, at most <see cref="MaxMessageChars"/> characters.</summary>
    public static string Message(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        string escaped = Escape(text, asciiOnly: false);
        if (escaped.Length <= MaxMessageChars)
        {
            return escaped;
        }

        int keep = (MaxMessageChars - 40) / 2;
        return $"{escaped[..keep]} … ({escaped.Length - (2 * keep)} characters left out) … {escaped[^keep..]}";
    }

    /// <summary>A field path for the trailer: printable ASCII only (anything else escaped), at most <see cref="MaxFieldChars"/> characters.</summary>
    public static string Field(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        string escaped = Escape(text, asciiOnly: true);
        return escaped.Length <= MaxFieldChars ? escaped : escaped[..(MaxFieldChars - 3)] + "...";
    }

    /// <summary>The same refusal with its message and string trailers made safe, or the exception itself when they already are.</summary>
    public static RpcException Safe(RpcException refusal)
    {
        ArgumentNullException.ThrowIfNull(refusal);
        string detail = Message(refusal.Status.Detail);
        bool clean = ReferenceEquals(detail, refusal.Status.Detail);
        foreach (Metadata.Entry entry in refusal.Trailers)
        {
            clean &= entry.IsBinary || ReferenceEquals(Field(entry.Value), entry.Value);
        }

        if (clean)
        {
            return refusal;
        }

        var trailers = new Metadata();
        foreach (Metadata.Entry entry in refusal.Trailers)
        {
            if (entry.IsBinary)
            {
                trailers.Add(entry.Key, entry.ValueBytes);
            }
            else
            {
                trailers.Add(entry.Key, Field(entry.Value));
            }
        }

        return new RpcException(new Status(refusal.StatusCode, detail), trailers);
    }

    private static string Escape(string text, bool asciiOnly)
    {
        int i = 0;
        while (i < text.Length && !NeedsEscape(text, i, asciiOnly))
        {
            i++;
        }

        if (i == text.Length)
        {
            return text;
        }

        var escaped = new StringBuilder(text.Length + 16).Append(text, 0, i);
        for (; i < text.Length; i++)
        {
            if (NeedsEscape(text, i, asciiOnly))
            {
                escaped.Append(CultureInfo.InvariantCulture, $"\\u{(int)text[i]:X4}");
            }
            else
            {
                escaped.Append(text[i]);
            }
        }

        return escaped.ToString();
    }

    // Controls and invisible formatting characters (bidirectional overrides among them) are escaped,
    // as are halves of surrogate pairs that have no partner; in trailers everything outside printable ASCII.
    private static bool NeedsEscape(string text, int i, bool asciiOnly)
    {
        char c = text[i];
        if (asciiOnly)
        {
            return c is < ' ' or > '~';
        }

        if (char.IsHighSurrogate(c))
        {
            return i + 1 >= text.Length || !char.IsLowSurrogate(text[i + 1]);
        }

        if (char.IsLowSurrogate(c))
        {
            return i == 0 || !char.IsHighSurrogate(text[i - 1]);
        }

        return char.IsControl(c) || CharUnicodeInfo.GetUnicodeCategory(c) is UnicodeCategory.Format or UnicodeCategory.OtherNotAssigned;
    }
}
