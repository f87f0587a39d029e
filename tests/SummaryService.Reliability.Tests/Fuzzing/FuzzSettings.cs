using System.Globalization;

namespace SummaryService.Reliability.Tests.Fuzzing;

/// <summary>
/// How much the fuzz tests send. CI sends 100,000 messages; a soak run sends more with
/// <c>SUMMARY_FUZZ_MESSAGES</c> (for example 2000000) and another random sequence with <c>SUMMARY_FUZZ_SEED</c>.
/// </summary>
internal static class FuzzSettings
{
    public const int DefaultMessages = 100_000;

    public static int Messages => int.Parse(Environment.GetEnvironmentVariable("SUMMARY_FUZZ_MESSAGES") ?? DefaultMessages.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);

    public static int Seed => int.Parse(Environment.GetEnvironmentVariable("SUMMARY_FUZZ_SEED") ?? "1900", CultureInfo.InvariantCulture);
}
