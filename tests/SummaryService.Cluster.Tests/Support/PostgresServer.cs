using Npgsql;
using SummaryService.Cluster.Postgres;
using SummaryService.TestSupport;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>
/// A real PostgreSQL server of the machine's Debian install (<c>apt-get install postgresql</c>),
/// its cluster made by initdb in a temporary folder and served on a free loopback port; stopped
/// and removed at the end. Each test takes a fresh database of its own from <see cref="NewDatabaseAsync"/>.
/// </summary>
public sealed class PostgresServer : IAsyncLifetime
{
    private const string User = "summary";
    private readonly TempDirectory _folder = new();
    private string _bin = "";
    private int _databases;

    public int Port { get; private set; }

    private string DataDirectory => Path.Combine(_folder.Path, "data");

    public async Task InitializeAsync()
    {
        string root = "/usr/lib/postgresql";
        _bin = Directory.Exists(root)
            ? Directory.GetDirectories(root).Select(d => Path.Combine(d, "bin")).Where(b => File.Exists(Path.Combine(b, "initdb"))).OrderDescending().FirstOrDefault() ?? ""
            : "";
        Assert.True(_bin.Length > 0, "PostgreSQL is not installed under /usr/lib/postgresql (Debian package postgresql; .ci/run installs it).");
        if (LocalCommand.IsRoot)
        {
            await LocalCommand.RunAsync("chown", ["postgres", _folder.Path]);
        }

        Port = ServerProcess.FreePort();
        await LocalCommand.RunAsync(Path.Combine(_bin, "initdb"), ["-D", DataDirectory, "-A", "trust", "-U", User, "--no-sync"], asPostgres: true);
        await LocalCommand.RunAsync(
            Path.Combine(_bin, "pg_ctl"),
            ["start", "-w", "-t", "60", "-D", DataDirectory, "-l", Path.Combine(_folder.Path, "server.log"), "-o", $"-p {Port} -h 127.0.0.1 -k {_folder.Path}"],
            asPostgres: true,
            timeoutSeconds: 90);
    }

    /// <summary>A new database with the cluster's schema in place, as a node leaves it at start-up; its connection string.</summary>
    public async Task<string> NewDatabaseAsync()
    {
        string connection = await NewEmptyDatabaseAsync();
        await using NpgsqlDataSource database = NpgsqlDataSource.Create(connection);
        await PostgresSchema.MigrateAsync(database);
        return connection;
    }

    /// <summary>A new empty database, whose schema a server creates at start-up; its connection string.</summary>
    public async Task<string> NewEmptyDatabaseAsync()
    {
        string name = $"test{Interlocked.Increment(ref _databases)}";
        await using NpgsqlDataSource admin = NpgsqlDataSource.Create(ConnectionString("postgres"));
        await using NpgsqlCommand create = admin.CreateCommand($"CREATE DATABASE {name}");
        await create.ExecuteNonQueryAsync();
        return ConnectionString(name);
    }

    public string ConnectionString(string database) => $"Host=127.0.0.1;Port={Port};Username={User};Database={database};Pooling=true";

    public async Task DisposeAsync()
    {
        try
        {
            await LocalCommand.RunAsync(Path.Combine(_bin, "pg_ctl"), ["stop", "-m", "immediate", "-D", DataDirectory], asPostgres: true);
        }
        finally
        {
            _folder.Dispose();
        }
    }
}
