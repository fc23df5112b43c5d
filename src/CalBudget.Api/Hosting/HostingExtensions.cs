using System.Text.Json;
using System.Text.Json.Serialization;
using CalBudget.Api.Auth;
using CalBudget.Api.OpenApi;
using CalBudget.Data;
using CalBudget.Data.Keys;
using Microsoft.AspNetCore.Authentication;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Hosting;

/// <summary>How the host is put together; <c>Program.cs</c> only calls these.</summary>
public static class HostingExtensions
{
    /// <summary>The output-cache policy of the OpenAPI document, which is costly to build and changes only with the code.</summary>
    public const string OpenApiCachePolicy = "openapi";

    /// <summary>Settings, server limits, logging, JSON, problem details, data, keys and authorization.</summary>
    public static WebApplicationBuilder AddCalBudgetHost(this WebApplicationBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        var section = builder.Configuration.GetSection(CalBudgetOptions.Section);
        var settings = section.Get<CalBudgetOptions>() ?? new CalBudgetOptions();
        builder.Services.Configure<CalBudgetOptions>(section);
        if (string.IsNullOrEmpty(builder.Configuration["urls"]) && string.IsNullOrEmpty(builder.Configuration["http_ports"]))
        {
            builder.WebHost.UseUrls(CalBudgetOptions.DefaultUrl);
        }

        builder.WebHost.ConfigureKestrel(k =>
        {
            k.AddServerHeader = false;
            k.Limits.MaxRequestBodySize = settings.MaxRequestBodyBytes;
        });
        // Large uploads (readings, stability series) arrive in one receive per buffer instead of a zero-byte wait and then a
        // receive: half the system calls, for a buffer held by each connection while it waits.
        builder.WebHost.UseSockets(o => o.WaitForDataBeforeAllocatingBuffer = false);
        builder.Services.Configure<HostOptions>(h => h.ShutdownTimeout = settings.ShutdownTimeout);

        builder.Services.Configure<JsonOptions>(o =>
        {
            // Numbers must be JSON numbers and unknown properties are refused: a misspelt field is an error, not a silent default.
            o.SerializerOptions.NumberHandling = JsonNumberHandling.Strict;
            o.SerializerOptions.UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow;
            o.SerializerOptions.DefaultIgnoreCondition = JsonIgnoreCondition.Never;
            o.SerializerOptions.PropertyNamingPolicy = JsonNamingPolicy.CamelCase;
        });
        builder.Services.Configure<RouteHandlerOptions>(o => o.ThrowOnBadRequest = true);
        builder.Services.AddProblemDetails(o => o.CustomizeProblemDetails = c =>
        {
            c.ProblemDetails.Instance ??= c.HttpContext.Request.Path;
            c.ProblemDetails.Extensions["requestId"] = c.HttpContext.TraceIdentifier;
        });
        builder.Services.AddExceptionHandler<RequestExceptionHandler>();

        builder.Services.AddSingleton(TimeProvider.System);
        builder.Services.AddSingleton(sp => new SqliteDatabase(sp.GetRequiredService<IOptions<CalBudgetOptions>>().Value.DataDirectory, backgroundCheckpoints: true));
        builder.Services.AddHostedService<WalCheckpointer>();
        builder.Services.AddSingleton<IDbConnectionFactory>(sp => sp.GetRequiredService<SqliteDatabase>());
        builder.Services.AddSingleton<CalBudget.Data.References.ReferenceStandardStore>();
        builder.Services.AddSingleton<CalBudget.Data.Instruments.InstrumentStore>();
        builder.Services.AddSingleton<CalBudget.Data.Calibrations.CalibrationRunStore>();
        builder.Services.AddSingleton<CalBudget.Data.Calibrations.ReadingStore>();
        builder.Services.AddSingleton<CalBudget.Data.Audit.AuditLog>();
        builder.Services.AddSingleton<CalBudget.Data.Budgets.BudgetStore>();
        builder.Services.AddSingleton<CalBudget.Data.Instruments.SensitivityTestStore>();
        // the templates are read (and checked) once; a malformed file stops the service at start, naming the file and field
        builder.Services.AddSingleton(sp => Budgets.TemplateCatalog.Load(Path.Combine(AppContext.BaseDirectory,
            sp.GetRequiredService<IOptions<CalBudgetOptions>>().Value.TemplatesDirectory)));
        builder.Services.AddSingleton(sp => Budgets.LabScope.Load(Path.Combine(AppContext.BaseDirectory,
            sp.GetRequiredService<IOptions<CalBudgetOptions>>().Value.TemplatesDirectory)));
        builder.Services.AddSingleton<CalBudget.Data.Certificates.CertificateStore>();
        // fonts and the lab's wording are found once; no usable font or a bad wording file stops the service at start
        builder.Services.AddSingleton(sp =>
        {
            var o = sp.GetRequiredService<IOptions<CalBudgetOptions>>().Value;
            var fonts = CalBudget.Reports.Fonts.CertificateFonts.Find(o.FontDirectory);
            var wording = Certificates.CertificateWording.Load(Path.Combine(AppContext.BaseDirectory, o.TemplatesDirectory, "wording", "certificate.json"));
            // the lab's signing key is read (or, outside Production without one, a self-signed demo key made) once at start
            var signature = Certificates.LabSigning.Load(o.SigningCertificatePath, o.SigningCertificatePassword, o.DataDirectory, wording.LabName,
                sp.GetRequiredService<IHostEnvironment>().IsProduction(), sp.GetRequiredService<TimeProvider>());
            return new Certificates.CertificateSetup(new CalBudget.Reports.CertificateRenderer(fonts), wording, fonts, signature);
        });
        builder.Services.AddSingleton(sp => new ApiKeyStore(sp.GetRequiredService<IDbConnectionFactory>(), sp.GetRequiredService<TimeProvider>())
        {
            CacheLifetime = sp.GetRequiredService<IOptions<CalBudgetOptions>>().Value.KeyCacheLifetime,
        });
        builder.Services.AddOutputCache(o => o.AddPolicy(OpenApiCachePolicy, p => p.Expire(TimeSpan.FromHours(1))));

        builder.Services.AddSingleton<CalBudget.Data.Users.UserStore>();
        builder.Services.AddSingleton<UserAccounts>();
        builder.Services.AddRazorComponents();
        builder.Services.AddCalBudgetRateLimits();
        builder.Services.AddAntiforgery(o =>
        {
            o.Cookie.Name = "calbudget.antiforgery";
            o.Cookie.SameSite = SameSiteMode.Strict;
            o.Cookie.SecurePolicy = Microsoft.AspNetCore.Http.CookieSecurePolicy.SameAsRequest;
        });
        builder.Services.AddAuthentication(ApiKeyAuthenticationHandler.SchemeName)
            .AddScheme<AuthenticationSchemeOptions, ApiKeyAuthenticationHandler>(ApiKeyAuthenticationHandler.SchemeName, null)
            .AddCookie(UserAccounts.CookieScheme, o =>
            {
                // the staff pages' session: HttpOnly, SameSite=Strict, Secure whenever the request came over HTTPS
                o.LoginPath = "/sign-in";
                o.AccessDeniedPath = "/denied";
                o.Cookie.Name = "calbudget.staff";
                o.Cookie.HttpOnly = true;
                o.Cookie.SameSite = SameSiteMode.Strict;
                o.Cookie.SecurePolicy = Microsoft.AspNetCore.Http.CookieSecurePolicy.SameAsRequest;
                o.ExpireTimeSpan = TimeSpan.FromHours(8);
                o.SlidingExpiration = true;
            });
        builder.Services.AddAuthorizationBuilder().AddCalBudgetPolicies();
        builder.Services.AddCalBudgetOpenApi();
        return builder;
    }

    private static AuthorizationBuilder AddCalBudgetPolicies(this AuthorizationBuilder auth)
    {
        foreach (var (name, roles) in Policies.All)
        {
            auth.AddPolicy(name, p => p.AddAuthenticationSchemes(ApiKeyAuthenticationHandler.SchemeName).RequireAuthenticatedUser().RequireRole(roles));
        }

        // the pages take the same roles, from the staff cookie only (an API key does not open a page, a cookie does not call the API)
        foreach (var (name, apiPolicy) in Pages.PagePolicies.RolesFrom)
        {
            auth.AddPolicy(name, p => p.AddAuthenticationSchemes(UserAccounts.CookieScheme).RequireAuthenticatedUser().RequireRole(Policies.RolesOf(apiPolicy)));
        }

        return auth;
    }

    /// <summary>The request pipeline: errors as problem details, the body limit, a request id header, auth.</summary>
    public static WebApplication UseCalBudgetPipeline(this WebApplication app)
    {
        ArgumentNullException.ThrowIfNull(app);
        app.UseExceptionHandler();
        app.UseStatusCodePages();
        app.Use((context, next) =>
        {
            context.Response.Headers["X-Request-Id"] = context.TraceIdentifier;
            return next(context);
        });
        app.Use((context, next) =>
        {
            // no script anywhere; nothing may frame the pages
            var h = context.Response.Headers;
            h["Content-Security-Policy"] = "default-src 'self'; script-src 'none'; style-src 'self'; img-src 'self'; form-action 'self'; frame-ancestors 'none'; base-uri 'none'; object-src 'none'";
            h["X-Content-Type-Options"] = "nosniff";
            h["Referrer-Policy"] = "no-referrer";
            h["X-Frame-Options"] = "DENY";
            return next(context);
        });
        app.UseMiddleware<RequestBodyLimitMiddleware>();
        app.UseRateLimiter();
        app.UseMiddleware<RequestTimeLimitMiddleware>();
        app.UseAuthentication();
        app.UseAuthorization();
        app.UseAntiforgery();
        app.UseOutputCache();
        return app;
    }
}
