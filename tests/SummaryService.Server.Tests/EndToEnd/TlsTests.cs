using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>TLS through the standard Kestrel endpoint settings, with a certificate made for the test.</summary>
[Collection(nameof(EndToEndTests))]
public sealed class TlsTests
{
    [Fact]
    public async Task The_server_speaks_grpc_over_tls_with_a_configured_certificate()
    {
        using var data = new TempDirectory();
        using var key = RSA.Create(2048);
        var request = new CertificateRequest("CN=127.0.0.1", key, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        var names = new SubjectAlternativeNameBuilder();
        names.AddIpAddress(System.Net.IPAddress.Loopback);
        request.CertificateExtensions.Add(names.Build());
        using X509Certificate2 certificate = request.CreateSelfSigned(DateTimeOffset.UtcNow.AddMinutes(-5), DateTimeOffset.UtcNow.AddDays(1));
        string pfx = Path.Combine(data.Path, "server.pfx");
        await File.WriteAllBytesAsync(pfx, certificate.Export(X509ContentType.Pfx, "test-password"));
        string thumbprint = certificate.Thumbprint;

        GrpcChannel Trusting(Uri address) => GrpcChannel.ForAddress(address, new GrpcChannelOptions
        {
            HttpHandler = new HttpClientHandler { ServerCertificateCustomValidationCallback = (_, presented, _, _) => presented?.Thumbprint == thumbprint },
        });

        var environment = new Dictionary<string, string>
        {
            ["Persistence__DataDirectory"] = Path.Combine(data.Path, "data"),
            ["Kestrel__Endpoints__Secure__Url"] = "https://127.0.0.1:{port}",
            ["Kestrel__Endpoints__Secure__Certificate__Path"] = pfx,
            ["Kestrel__Endpoints__Secure__Certificate__Password"] = "test-password",
        };
        int port = ServerProcess.FreePort();
        var address = new Uri($"https://127.0.0.1:{port}");
        await using var server = await ServerProcess.StartAsync(environment, scheme: "https", channel: () => Trusting(address), port: port);
        using GrpcChannel channel = Trusting(address);
        await new Ingest.IngestClient(channel).PushAsync(Requests.Batch("shop.tls", [1, 2]));
        var reply = await new Query.QueryClient(channel).SummarizeAsync(Requests.Summarize("shop.tls"));
        Assert.Equal(2ul, Assert.Single(reply.Groups).Summary.Count);
    }
}
