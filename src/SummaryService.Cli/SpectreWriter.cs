using System.Text;

namespace SummaryService.Cli;

/// <summary>Help text goes to the same console as everything else, so a test console records it too.</summary>
internal sealed class SpectreWriter(CliConsole console) : TextWriter
{
    public override Encoding Encoding => Encoding.UTF8;

    public override void Write(char value) => console.Out.Profile.Out.Writer.Write(value);

    public override void Write(string? value) => console.Out.Profile.Out.Writer.Write(value);

    public override void WriteLine(string? value) => console.Out.Profile.Out.Writer.WriteLine(value);

    public override void Flush() => console.Out.Profile.Out.Writer.Flush();
}
