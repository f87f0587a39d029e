namespace SummaryService.Cli;

/// <summary>A mistake in the command line or its input found before or instead of asking the server; exit code 1.</summary>
public sealed class UsageException(string message) : Exception(message);
