namespace SummaryService.Sketches;

/// <summary>Guards confidence levels: a probability strictly between 0 and 1.</summary>
internal static class Confidence
{
    public static void Require(double confidence)
    {
        if (!(confidence > 0 && confidence < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(confidence), confidence, "Confidence must lie strictly between 0 and 1, for example 0.99.");
        }
    }
}
