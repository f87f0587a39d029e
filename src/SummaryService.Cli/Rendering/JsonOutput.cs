using Google.Protobuf;

namespace SummaryService.Cli.Rendering;

/// <summary>
/// The reply as the protobuf JSON mapping (the same form as the server's JSON routes), one document per
/// line. Zero counts and false flags are written too, so scripts need no defaults of their own; figures
/// the server left out as undefined stay absent.
/// </summary>
public static class JsonOutput
{
    private static readonly JsonFormatter Formatter = new(JsonFormatter.Settings.Default.WithFormatDefaultValues(true));

    /// <summary>Writes <paramref name="reply"/> as one line of JSON.</summary>
    public static void Write(CliConsole console, IMessage reply)
    {
        ArgumentNullException.ThrowIfNull(console);
        console.WriteRaw(Formatter.Format(reply));
    }
}
