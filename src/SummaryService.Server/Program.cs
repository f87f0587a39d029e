using SummaryService.Server.Hosting;

var builder = WebApplication.CreateBuilder(args);
builder.AddSummaryService();
var app = builder.Build();
app.MapSummaryService();
app.Run();

/// <summary>The host's entry point; public so in-process tests can start it.</summary>
public partial class Program;
