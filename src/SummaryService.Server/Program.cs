using SummaryService.Server.Hosting;

// The content root is the application's own folder, so the defaults in appsettings.json apply
// wherever the server is started from (a service manager or a container rarely starts it there).
bool probe = HealthProbe.IsRequested(args);
var options = new WebApplicationOptions { Args = probe ? HealthProbe.HostArguments(args) : args, ContentRootPath = AppContext.BaseDirectory };
if (probe)
{
    return await HealthProbe.RunAsync(args, WebApplication.CreateBuilder(options).Configuration);
}

var builder = WebApplication.CreateBuilder(options);
builder.AddSummaryService();
var app = builder.Build();
app.MapSummaryService();
await app.RunAsync();
return 0;

/// <summary>The host's entry point; public so in-process tests can start it.</summary>
public partial class Program;
