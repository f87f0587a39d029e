using SummaryService.Cli.Tests.Support;
using SummaryService.Contract.V1;
using SummaryService.TestSupport;

namespace SummaryService.Cli.Tests.EndToEnd;

/// <summary>A server with keys on: the key comes from --api-key or SUMMARY_API_KEY; a wrong or missing one is exit code 3.</summary>
[Collection(nameof(ServerCollection))]
public sealed class AuthTests
{
    private const string Key = "otterbyte-ops-key-1";

    [Fact]
    public async Task A_wrong_or_missing_key_is_refused_with_exit_code_3()
    {
        using var data = new TempDirectory();
        var environment = new Dictionary<string, string>
        {
            ["Persistence__DataDirectory"] = data.Path,
            ["Auth__Enabled"] = "true",
            ["Auth__Keys__0__Name"] = "ops",
            ["Auth__Keys__0__Sha256"] = Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(System.Text.Encoding.UTF8.GetBytes(Key))),
            ["Auth__Keys__0__Scopes__0"] = "write",
            ["Auth__Keys__0__Scopes__1"] = "read",
        };
        await using var server = await ServerProcess.StartAsync(environment);
        string address = server.Address.ToString();

        var sent = await CliRun.RunAsync(["send", "otterbyte.test.auth", "1", "2", "--server", address, "--api-key", Key]);
        Assert.Equal(ExitCodes.Ok, sent.ExitCode);
        var read = await CliRun.RunAsync(["window", "otterbyte.test.auth", "--json", "--server", address], environment: new Dictionary<string, string> { ["SUMMARY_API_KEY"] = Key });
        Assert.Equal(2ul, Assert.Single(read.Json<SummarizeReply>().Groups).Summary.Count);

        var wrong = await CliRun.RunAsync(["window", "otterbyte.test.auth", "--server", address, "--api-key", "not-the-key"]);
        Assert.Equal(ExitCodes.AuthRefused, wrong.ExitCode);
        string line = Assert.Single(wrong.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains("refused the API key", line, StringComparison.Ordinal);

        Assert.Equal(ExitCodes.AuthRefused, (await CliRun.RunAsync(["window", "otterbyte.test.auth", "--server", address])).ExitCode);
        Assert.Equal(ExitCodes.AuthRefused, (await CliRun.RunAsync(["send", "otterbyte.test.auth", "3", "--server", address, "--api-key", "not-the-key"])).ExitCode);

        // The key holds no admin scope: the holdings are refused as a permission, also exit code 3.
        var admin = await CliRun.RunAsync(["holdings", "--server", address, "--api-key", Key]);
        Assert.Equal(ExitCodes.AuthRefused, admin.ExitCode);
        Assert.Contains("lacks the admin scope", admin.Error, StringComparison.Ordinal);
    }
}
