using CalBudget.Api.Analytics;
using CalBudget.Api.Audit;
using CalBudget.Api.Budgets;
using CalBudget.Api.Certificates;
using CalBudget.Api.Calibrations;
using CalBudget.Api.Cli;
using CalBudget.Api.Health;
using CalBudget.Api.Hosting;
using CalBudget.Api.Instruments;
using CalBudget.Api.Keys;
using CalBudget.Api.Pages;
using CalBudget.Api.References;

if (CommandLine.IsCommand(args))
{
    return await CommandLine.RunAsync(args, Console.Out, Console.Error);
}

var builder = WebApplication.CreateBuilder(new WebApplicationOptions { Args = args, ContentRootPath = AppContext.BaseDirectory });
builder.AddCalBudgetHost();

var app = builder.Build();
app.UseCalBudgetPipeline();
app.MapOpenApi("/openapi/{documentName}.json").AllowAnonymous().CacheOutput(HostingExtensions.OpenApiCachePolicy);
app.MapHealthApi();
app.MapBudgetsApi();
app.MapAnalyticsApi();
app.MapOrientationApi();
app.MapAgingApi();
app.MapKeysApi();
app.MapReferencesApi();
app.MapInstrumentsApi();
app.MapCalibrationsApi();
app.MapReadingsApi();
app.MapAuditApi();
app.MapStoredBudgetsApi();
app.MapSensitivityTestsApi();
app.MapCertificatesApi();
app.MapStaffPages();

await app.Services.InitialiseDatabaseAsync(seedDemoData: app.Environment.IsDevelopment());
await app.RunAsync();
return 0;

/// <summary>The host's entry point (public for the HTTP tests' WebApplicationFactory).</summary>
public partial class Program;
