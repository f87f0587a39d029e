namespace SummaryService.Store;

/// <summary>
/// The store cannot make a write durable now (the data directory is full, read-only or failing),
/// or refuses writes until it can. Reported as Unavailable: the same batch may be sent again later
/// (with its producer and sequence it is then counted once, whatever became of this attempt).
/// </summary>
public sealed class StorageUnavailableException(string message, Exception? inner = null) : Exception(message, inner);
