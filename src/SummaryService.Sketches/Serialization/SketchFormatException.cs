namespace SummaryService.Sketches.Serialization;

/// <summary>
/// Serialized sketch bytes that cannot be trusted: unparseable, of an unknown version, or with a
/// state no sketch could have reached. The message names the offending field and value.
/// </summary>
public sealed class SketchFormatException : FormatException
{
    /// <summary>Creates the exception with a message naming the field.</summary>
    public SketchFormatException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception around the parser's own error.</summary>
    public SketchFormatException(string message, Exception inner)
        : base(message, inner)
    {
    }
}
