using System.Globalization;
using System.Security.Claims;
using System.Text.Json;
using CalBudget.Api.Audit;
using CalBudget.Api.Auth;
using CalBudget.Api.Budgets;
using CalBudget.Api.Calibrations;
using CalBudget.Api.Certificates;
using CalBudget.Api.Hosting;
using CalBudget.Api.Instruments;
using CalBudget.Api.References;
using CalBudget.Core.Stability;
using CalBudget.Data;
using CalBudget.Data.Audit;
using CalBudget.Data.Budgets;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Certificates;
using CalBudget.Data.Instruments;
using CalBudget.Data.Keys;
using Microsoft.AspNetCore.Authentication;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Pages;

/// <summary>The page policies: signed in with the staff cookie, with the roles of the API's policies.</summary>
public static class PagePolicies
{
    /// <summary>Any signed-in person.</summary>
    public const string Staff = "page-staff";

    /// <summary>Technicians (and integrations).</summary>
    public const string Writer = "page-writer";

    /// <summary>Approvers.</summary>
    public const string Approver = "page-approver";

    /// <summary>Technicians, integrations and approvers.</summary>
    public const string Issuer = "page-issuer";

    /// <summary>Auditors and admins.</summary>
    public const string Audit = "page-audit";

    /// <summary>Admins.</summary>
    public const string Admin = "page-admin";

    /// <summary>Each page policy and the API policy whose roles it takes.</summary>
    public static IReadOnlyDictionary<string, string> RolesFrom { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        [Staff] = Policies.AnyRole,
        [Writer] = Policies.Writer,
        [Approver] = Policies.Approver,
        [Issuer] = Policies.Issuer,
        [Audit] = Policies.AuditReader,
        [Admin] = Policies.Admin,
    };
}

/// <summary>
/// The staff pages: Razor components rendered by Minimal API endpoints, plain HTML forms (no script), antiforgery on every
/// POST, the cookie of a signed-in person. Every change goes through the same handler as the REST API, so the rules,
/// the audit trail and the error messages are the same; the errors are shown next to their fields.
/// </summary>
public static class StaffPages
{
    /// <summary>The OpenAPI tag of the pages.</summary>
    public const string Tag = "Staff pages";

    /// <summary>Maps the pages; they are in the OpenAPI document under their own tag, with the cookie as their security.</summary>
    public static IEndpointRouteBuilder MapStaffPages(this IEndpointRouteBuilder routes)
    {
        routes.MapGet("/static/site.css", (HttpResponse response) =>
        {
            response.Headers.CacheControl = "public, max-age=3600";
            return Results.Text(StyleSheet.Value, "text/css; charset=utf-8");
        }).AllowAnonymous().WithTags(Tag).WithSummary("The pages' style sheet").Produces(StatusCodes.Status200OK, contentType: "text/css");
        var open = routes.MapGroup("").WithTags(Tag).AllowAnonymous();
        open.MapGet("/sign-in", (string? returnUrl) => Page<SignIn>(new { ReturnUrl = returnUrl })).WithSummary("The sign-in page").Produces(StatusCodes.Status200OK, contentType: "text/html");
        open.MapPost("/sign-in", SignInAsync).WithSummary("Sign in (form: name, password, returnUrl): 302 on success, the page with the reason (401) otherwise")
            .Produces(StatusCodes.Status302Found).Produces(StatusCodes.Status401Unauthorized, contentType: "text/html");

        var pages = routes.MapGroup("").WithTags(Tag).RequireAuthorization(PagePolicies.Staff)
            .WithMetadata(new ProducesResponseTypeMetadata(StatusCodes.Status200OK, null, ["text/html"]))
            .WithDescription("A staff page (HTML); without the staff cookie it redirects to /sign-in.");
        pages.MapGet("/", () => Results.Redirect("/instruments"));
        pages.MapPost("/sign-out", SignOutAsync);
        pages.MapGet("/denied", (HttpContext http) => Page<Message>(new { Title = "Not allowed", Text = "Your role does not allow this.", http.User }, StatusCodes.Status403Forbidden));
        pages.MapGet("/instruments", InstrumentsAsync);
        pages.MapGet("/instruments/new", (HttpContext http) => Page<InstrumentNew>(new { http.User })).RequireAuthorization(PagePolicies.Writer);
        pages.MapPost("/instruments/new", CreateInstrumentAsync).RequireAuthorization(PagePolicies.Writer);
        pages.MapGet("/instruments/{id:long}", InstrumentAsync);
        pages.MapGet("/instruments/{id:long}/edit", EditInstrumentFormAsync).RequireAuthorization(PagePolicies.Writer);
        pages.MapPost("/instruments/{id:long}/edit", EditInstrumentAsync).RequireAuthorization(PagePolicies.Writer);
        pages.MapGet("/references", async (HttpContext http, CalBudget.Data.References.ReferenceStandardStore store, TimeProvider time, CancellationToken ct) =>
            Page<ReferenceList>(new
            {
                Items = ValueOf<Page<ReferenceStandardDto>>((await ReferencesApi.List(store, time, 200, null, null, null, true, ct)).Result)?.Items ?? [],
                Now = time.GetUtcNow(), http.User,
            }));
        pages.MapGet("/admin", (HttpContext http, Data.Users.UserStore users, ApiKeyStore keys, CancellationToken ct) => AdminAsync(http, users, keys, null, null, ct))
            .RequireAuthorization(PagePolicies.Admin);
        pages.MapPost("/admin/users", AddUserAsync).RequireAuthorization(PagePolicies.Admin);
        pages.MapPost("/admin/keys", AddKeyAsync).RequireAuthorization(PagePolicies.Admin);
        pages.MapPost("/admin/keys/revoke", RevokeKeyAsync).RequireAuthorization(PagePolicies.Admin);
        pages.MapGet("/instruments/{id:long}/runs/new", (long id, HttpContext http, InstrumentStore store, CalibrationRunStore runs, CalBudget.Data.References.ReferenceStandardStore references,
            TimeProvider time, IOptions<JsonOptions> json, CancellationToken ct) => NewRunAsync(id, http, store, runs, references, time, json, ct)).RequireAuthorization(PagePolicies.Writer);
        pages.MapPost("/instruments/{id:long}/runs/new", CreateRunAsync).RequireAuthorization(PagePolicies.Writer).DisableAntiforgery().WithMetadata(new Microsoft.AspNetCore.Antiforgery.RequireAntiforgeryTokenAttribute());
        pages.MapGet("/runs/{id:long}", (long id, HttpContext http, CalibrationRunStore runs, ReadingStore readings, BudgetStore budgets, TemplateCatalog catalog,
            IOptions<JsonOptions> json, CancellationToken ct) => RunAsync(id, http, runs, readings, budgets, catalog, json, ct));
        pages.MapGet("/runs/{id:long}/stability.png", StabilityPngAsync);
        pages.MapPost("/runs/{id:long}/budgets", BuildBudgetAsync).RequireAuthorization(PagePolicies.Writer);
        pages.MapGet("/budgets/{id:long}", (long id, HttpContext http, BudgetStore budgets, CertificateStore certificates, IOptions<JsonOptions> json, CancellationToken ct) =>
            BudgetAsync(id, http, budgets, certificates, json, ct));
        pages.MapPost("/budgets/{id:long}/versions", ReviseAsync).RequireAuthorization(PagePolicies.Writer);
        pages.MapGet("/budgets/{id:long}/diff", DiffAsync);
        pages.MapPost("/budgets/{id:long}/approve", ApproveAsync).RequireAuthorization(PagePolicies.Approver);
        pages.MapPost("/budgets/{id:long}/certificates", IssueAsync).RequireAuthorization(PagePolicies.Issuer);
        pages.MapGet("/certificates/{id:long}.pdf", async (long id, CertificateStore store, HttpResponse response, CancellationToken ct) =>
            (await CertificatesApi.Pdf(id, store, response, ct)).Result);
        pages.MapGet("/audit", AuditAsync).RequireAuthorization(PagePolicies.Audit);
        return routes;
    }

    private static readonly Lazy<string> StyleSheet = new(() =>
    {
        using var stream = typeof(StaffPages).Assembly.GetManifestResourceStream("CalBudget.Api.Pages.site.css")!;
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd();
    });

    private static RazorComponentResult<T> Page<T>(object parameters, int status = StatusCodes.Status200OK)
        where T : Microsoft.AspNetCore.Components.IComponent => new(parameters) { StatusCode = status };

    private static RazorComponentResult<Message> NotFound(HttpContext http, string what) =>
        Page<Message>(new { Title = "Not found", Text = what, http.User }, StatusCodes.Status404NotFound);

    private static bool Can(ClaimsPrincipal user, string apiPolicy) => Policies.RolesOf(apiPolicy).Any(user.IsInRole);

    private static IDictionary<string, string[]>? ErrorsOf(IResult result) => result switch
    {
        ProblemHttpResult { ProblemDetails: HttpValidationProblemDetails v } => v.Errors,
        ProblemHttpResult p => new Dictionary<string, string[]> { ["$"] = [p.ProblemDetails.Detail ?? p.ProblemDetails.Title ?? "Refused."] },
        _ => null,
    };

    private static T? ValueOf<T>(IResult result) => result is IValueHttpResult<T> v ? v.Value : default;

    // A number typed in a form field: null when left empty; text that is not a number is an error under the API's field name.
    private static double? FormNumber(Dictionary<string, string> values, string field, string apiField, Dictionary<string, string[]> errors)
    {
        string text = values.GetValueOrDefault(field, "").Trim();
        if (text.Length == 0)
        {
            return null;
        }

        if (double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double v))
        {
            return v;
        }

        errors[apiField] = [$"Not a number: '{text}' (write it like 1e-9 or 10000000)."];
        return null;
    }

    private static Dictionary<string, string> Typed(IFormCollection form) =>
        form.Where(f => !f.Key.StartsWith("__", StringComparison.Ordinal)).ToDictionary(f => f.Key, f => f.Value.ToString(), StringComparer.Ordinal);

    private static async Task<IResult> SignInAsync(IFormCollection form, HttpContext http, UserAccounts accounts, CancellationToken ct)
    {
        string name = form["name"].ToString(), returnUrl = form["returnUrl"].ToString();
        var (outcome, principal, lockedUntil) = await accounts.SignInAsync(name, form["password"].ToString(), ct);
        if (outcome != SignInOutcome.Success)
        {
            string error = outcome == SignInOutcome.LockedOut
                ? $"Too many failed attempts: the account is locked until {lockedUntil:HH:mm} UTC."
                : "The name or the password is not right.";
            return Page<SignIn>(new { Error = error, Name = name, ReturnUrl = returnUrl }, StatusCodes.Status401Unauthorized);
        }

        await http.SignInAsync(UserAccounts.CookieScheme, principal!);
        // only a local path: never an open redirect
        return Results.Redirect(returnUrl.StartsWith('/') && !returnUrl.StartsWith("//", StringComparison.Ordinal) && !returnUrl.StartsWith("/\\", StringComparison.Ordinal)
            ? returnUrl : "/instruments");
    }

    private static async Task<IResult> SignOutAsync(IFormCollection form, HttpContext http)
    {
        _ = form;
        await http.SignOutAsync(UserAccounts.CookieScheme);
        return Results.Redirect("/sign-in");
    }

    private static async Task<IResult> InstrumentsAsync(string? q, HttpContext http, InstrumentStore store, IOptions<JsonOptions> json, CancellationToken ct)
    {
        var page = (await InstrumentsApi.List(store, json, 200, null, null, null, string.IsNullOrWhiteSpace(q) ? null : q.Trim(), false, ct)).Result;
        return Page<InstrumentList>(new { Items = ValueOf<Page<InstrumentDto>>(page)?.Items ?? [], Query = q, CanWrite = Can(http.User, Policies.Writer), http.User });
    }

    private static async Task<IResult> CreateInstrumentAsync(IFormCollection form, HttpContext http, IDbConnectionFactory database, TimeProvider time,
        IOptions<JsonOptions> json, CancellationToken ct)
    {
        var values = Typed(form);
        var (request, errors) = InstrumentFromForm(values, null);
        if (errors.Count == 0)
        {
            var result = await InstrumentsApi.Create(request!, http, database, time, json, null, ct);
            if (ValueOf<InstrumentDto>(result) is { } created)
            {
                return Results.Redirect($"/instruments/{created.Id}");
            }

            foreach (var (field, messages) in ErrorsOf(result) ?? new Dictionary<string, string[]>())
            {
                errors[field.Replace("timebase.specification.tolerance.lower", "timebase.specification.tolerance.upper", StringComparison.Ordinal)] = messages;
            }
        }

        return Page<InstrumentNew>(new { Values = values, Errors = errors, http.User }, StatusCodes.Status400BadRequest);
    }

    // the form's fields from a stored instrument
    private static Dictionary<string, string> FormOf(InstrumentDto i)
    {
        var spec = i.Timebase.Specification;
        string N(double? v) => v is { } x ? x.ToString("R", CultureInfo.InvariantCulture) : "";
        return new Dictionary<string, string>(StringComparer.Ordinal)
        {
            ["assetNumber"] = i.AssetNumber, ["customer"] = i.Customer, ["manufacturer"] = i.Manufacturer, ["model"] = i.Model, ["serialNumber"] = i.SerialNumber,
            ["nominalFrequencyHz"] = N(i.Timebase.NominalFrequencyHz), ["toleranceHalfWidth"] = N(spec?.Tolerance?.Upper),
            ["accelerationSensitivityPerG"] = N(spec?.AccelerationSensitivityPerG), ["temperatureCoefficientPerKelvin"] = N(spec?.TemperatureCoefficientPerKelvin),
            ["agingPerDay"] = N(spec?.AgingPerDay), ["retrace"] = N(spec?.Retrace), ["oscillatorKind"] = i.Timebase.OscillatorKind ?? "",
            ["version"] = i.Version.ToString(CultureInfo.InvariantCulture),
        };
    }

    private static async Task<IResult> EditInstrumentFormAsync(long id, HttpContext http, InstrumentStore store, CalibrationRunStore runs, IOptions<JsonOptions> json, CancellationToken ct) =>
        ValueOf<InstrumentDto>((await InstrumentsApi.Get(id, store, runs, json, http.Response, ct)).Result) is { } i
            ? Page<InstrumentNew>(new { Heading = $"Edit instrument {i.AssetNumber}", Action = $"/instruments/{id}/edit", Button = "Save", Values = FormOf(i), http.User })
            : NotFound(http, $"No instrument has the id {id}.");

    private static async Task<IResult> EditInstrumentAsync(long id, IFormCollection form, HttpContext http, IDbConnectionFactory database, TimeProvider time, InstrumentStore store,
        CalibrationRunStore runs, IOptions<JsonOptions> json, CancellationToken ct)
    {
        if (ValueOf<InstrumentDto>((await InstrumentsApi.Get(id, store, runs, json, http.Response, ct)).Result) is not { } current)
        {
            return NotFound(http, $"No instrument has the id {id}.");
        }

        var values = Typed(form);
        var (request, errors) = InstrumentFromForm(values, current);
        if (errors.Count == 0)
        {
            // the version the form was made from: a change saved meanwhile gets 412 (read again), as over the API
            http.Request.Headers.IfMatch = "\"" + values.GetValueOrDefault("version", "0") + "\"";
            var result = (await InstrumentsApi.Update(id, request!, http, database, time, json, ct)).Result;
            if (ErrorsOf(result) is not { } refused)
            {
                return Results.Redirect($"/instruments/{id}");
            }

            foreach (var (field, messages) in refused)
            {
                errors[field] = messages;
            }
        }

        return Page<InstrumentNew>(new { Heading = $"Edit instrument {current.AssetNumber}", Action = $"/instruments/{id}/edit", Button = "Save", Values = values, Errors = errors, http.User },
            StatusCodes.Status400BadRequest);
    }

    // The request from the form; on an edit the fields the form does not show (description, postures, the rest of the
    // specification) keep their stored values.
    private static (InstrumentRequest? Request, Dictionary<string, string[]> Errors) InstrumentFromForm(Dictionary<string, string> values, InstrumentDto? current)
    {
        var errors = new Dictionary<string, string[]>(StringComparer.Ordinal);
        double? Number(string field) => FormNumber(values, field, InstrumentNew.ApiField(field), errors);

        double? nominal = Number("nominalFrequencyHz"), tolerance = Number("toleranceHalfWidth"), gamma = Number("accelerationSensitivityPerG"),
            temperature = Number("temperatureCoefficientPerKelvin"), aging = Number("agingPerDay"), retrace = Number("retrace");
        if (errors.Count > 0)
        {
            return (null, errors);
        }

        string? Text(string f) => values.GetValueOrDefault(f) is { Length: > 0 } t ? t : null;
        var spec = current?.Timebase.Specification;
        var specification = new TimebaseSpecificationDto(tolerance is { } h ? new ToleranceDto(-h, h, spec?.Tolerance?.Conditions) : null, aging, spec?.AgingPerYear, temperature,
            spec?.TemperatureRangeCelsius, gamma, spec?.WarmUpMinutes, retrace);
        var postures = current is null
            ? new[] { new PostureDto("standing on its feet", JsonSerializer.SerializeToElement("+z")) }
            : current.Postures.Select(p => new PostureDto(p.Name, JsonSerializer.SerializeToElement(p.Up))).ToArray();
        return (new InstrumentRequest(Text("assetNumber"), Text("customer"), Text("manufacturer"), Text("model"), Text("serialNumber") ?? "", current?.Description ?? "",
            new TimebaseDto(Text("oscillatorKind"), nominal, specification), postures), errors);
    }

    private static async Task<IResult> AdminAsync(HttpContext http, Data.Users.UserStore users, ApiKeyStore keys, string? shown, IDictionary<string, string[]>? errors, CancellationToken ct) =>
        Page<AdminPage>(new { Users = await users.ListAsync(ct), Keys = (await Keys.KeysApi.List(keys, ct)).Value ?? [], Shown = shown, Errors = errors, http.User },
            errors is null ? StatusCodes.Status200OK : StatusCodes.Status400BadRequest);

    private static async Task<IResult> AddUserAsync(IFormCollection form, HttpContext http, UserAccounts accounts, Data.Users.UserStore users, ApiKeyStore keys, CancellationToken ct)
    {
        string name = form["name"].ToString().Trim(), role = form["role"].ToString(), password = UserAccounts.NewPassword();
        try
        {
            return await accounts.CreateAsync(name, role, password, actor: Conventions.Actor(http.User), ct: ct) is null
                ? await AdminAsync(http, users, keys, null, new Dictionary<string, string[]> { ["name"] = [$"A user named '{name}' exists already."] }, ct)
                : await AdminAsync(http, users, keys, $"Added {name} ({role}). Their first password, shown once: {password}", null, ct);
        }
        catch (ArgumentException ex)
        {
            return await AdminAsync(http, users, keys, null, new Dictionary<string, string[]> { [ex.ParamName ?? "name"] = [ex.Message] }, ct);
        }
    }

    private static async Task<IResult> AddKeyAsync(IFormCollection form, HttpContext http, Data.Users.UserStore users, ApiKeyStore keys, CancellationToken ct)
    {
        var result = (await Keys.KeysApi.Create(new Keys.CreateKeyRequest(form["name"].ToString(), form["role"].ToString(), form["holder"].ToString() is { Length: > 0 } h ? h : null),
            keys, http.User, ct)).Result;
        return ValueOf<Keys.CreatedKeyDto>(result) is { } created
            ? await AdminAsync(http, users, keys, $"Made key {created.Name} ({created.Role}), shown once: {created.Key}", null, ct)
            : await AdminAsync(http, users, keys, null, ErrorsOf(result), ct);
    }

    private static async Task<IResult> RevokeKeyAsync(IFormCollection form, HttpContext http, Data.Users.UserStore users, ApiKeyStore keys, CancellationToken ct)
    {
        var result = (await Keys.KeysApi.Revoke(form["name"].ToString(), keys, http.User, ct)).Result;
        return await AdminAsync(http, users, keys, ErrorsOf(result) is null ? $"Revoked key {form["name"]}." : null, ErrorsOf(result), ct);
    }

    private static async Task<IResult> InstrumentAsync(long id, HttpContext http, InstrumentStore store, CalibrationRunStore runs, BudgetStore budgets,
        CertificateStore certificates, IOptions<JsonOptions> json, CancellationToken ct)
    {
        if (ValueOf<InstrumentDto>((await InstrumentsApi.Get(id, store, runs, json, http.Response, ct)).Result) is not { } instrument)
        {
            return NotFound(http, $"No instrument has the id {id}.");
        }

        var runList = ValueOf<Page<CalibrationRunDto>>((await CalibrationsApi.List(runs, 200, null, id, null, null, false, ct)).Result)?.Items ?? [];
        var budgetList = ValueOf<Page<BudgetDto>>((await StoredBudgetsApi.List(budgets, json, 200, null, null, id, ct)).Result)?.Items ?? [];

        var certs = ValueOf<Page<CertificateDto>>((await CertificatesApi.List(certificates, json, 200, null, id, null, ct)).Result)?.Items ?? [];
        return Page<InstrumentDetail>(new { Instrument = instrument, Runs = runList.OrderByDescending(r => r.StartedAt).ToArray(), Budgets = budgetList, Certificates = certs, CanWrite = Can(http.User, Policies.Writer), http.User });
    }

    private static async Task<IResult> NewRunAsync(long id, HttpContext http, InstrumentStore store, CalibrationRunStore runs, CalBudget.Data.References.ReferenceStandardStore references,
        TimeProvider time, IOptions<JsonOptions> json, CancellationToken ct, IReadOnlyDictionary<string, string>? values = null, IDictionary<string, string[]>? errors = null)
    {
        if (ValueOf<InstrumentDto>((await InstrumentsApi.Get(id, store, runs, json, http.Response, ct)).Result) is not { } instrument)
        {
            return NotFound(http, $"No instrument has the id {id}.");
        }

        var refs = ValueOf<Page<ReferenceStandardDto>>((await ReferencesApi.List(references, time, 200, null, null, null, false, ct)).Result)?.Items ?? [];
        return Page<RunNew>(new { Instrument = instrument, References = refs, Values = values ?? new Dictionary<string, string>(), Errors = errors, http.User },
            errors is null ? StatusCodes.Status200OK : StatusCodes.Status400BadRequest);
    }

    private static async Task<IResult> CreateRunAsync(long id, HttpContext http, IDbConnectionFactory database, TimeProvider time, InstrumentStore store, CalibrationRunStore runs,
        CalBudget.Data.References.ReferenceStandardStore references, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        var form = await http.Request.ReadFormAsync(ct);
        var values = Typed(form);
        var errors = new Dictionary<string, string[]>(StringComparer.Ordinal);
        double? Number(string field, string api) => FormNumber(values, field, api, errors);

        double? resolution = Number("resolution", "comparator.resolution"), gate = Number("gate", "gateTimeSeconds"), temperature = Number("temperature", "environment.temperatureCelsius");
        double? variation = Number("variation", "environment.temperatureVariationKelvin"), warmUp = Number("warmUp", "warmUpMinutes"),
            systematic = Number("systematic", "comparator.systematicError");
        DateTimeOffset? started = null;
        if (values.GetValueOrDefault("startedAt", "").Trim() is { Length: > 0 } s)
        {
            if (DateTimeOffset.TryParse(s, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal | DateTimeStyles.AdjustToUniversal, out var t))
            {
                started = t;
            }
            else
            {
                errors["startedAt"] = [$"Not a time: '{s}' (write 2026-12-01T09:00:00Z)."];
            }
        }

        var file = form.Files.GetFile("readings");
        if (file is null || file.Length == 0)
        {
            errors["body"] = ["Choose the CSV file of the counter's readings."];
        }

        if (errors.Count == 0)
        {
            var request = new CalibrationRunRequest(id, long.TryParse(values.GetValueOrDefault("referenceId"), CultureInfo.InvariantCulture, out long r) ? r : null,
                new ComparatorDto(values.GetValueOrDefault("comparator"), resolution, systematic), gate, new RunPostureDto(values.GetValueOrDefault("posture"), null),
                new EnvironmentDto(temperature, variation, null, null), values.GetValueOrDefault("condition", "as-found"), started, null, null, warmUp);
            var created = await CalibrationsApi.Create(request, http, database, time, json, null, ct);
            if (ValueOf<CalibrationRunDto>(created) is { } run)
            {
                await using var stream = file!.OpenReadStream();
                var upload = await ReadingsApi.UploadAsync(run.Id, null, "text/csv", stream, http, database, time, json, options, null, ct);
                if (ErrorsOf(upload) is { } uploadErrors)
                {
                    // the run stays recorded (its creation is in the audit trail); the readings can be uploaded again on its page
                    return Page<Message>(new { Title = $"Run {run.Id} recorded, readings refused", Text = string.Join(" ", uploadErrors.Select(e => $"{e.Key}: {string.Join(" ", e.Value)}")), http.User },
                        StatusCodes.Status400BadRequest);
                }

                return Results.Redirect($"/runs/{run.Id}");
            }

            foreach (var (field, messages) in ErrorsOf(created) ?? new Dictionary<string, string[]>())
            {
                errors[field] = messages;
            }
        }

        return await NewRunAsync(id, http, store, runs, references, time, json, ct, values, errors);
    }

    private static async Task<double[]> ReadingsAsync(long runId, ReadingStore readings, CancellationToken ct) =>
        await readings.LatestAsync(runId, ct) is { } upload ? await readings.FractionalOffsetsAsync(upload.Id, ct) : [];

    private static async Task<IResult> RunAsync(long id, HttpContext http, CalibrationRunStore runs, ReadingStore readings, BudgetStore budgets, TemplateCatalog catalog,
        IOptions<JsonOptions> json, CancellationToken ct, IReadOnlyDictionary<string, string>? values = null, IDictionary<string, string[]>? errors = null)
    {
        if (ValueOf<CalibrationRunDto>((await CalibrationsApi.Get(id, runs, http.Response, ct)).Result) is not { } run)
        {
            return NotFound(http, $"No calibration run has the id {id}.");
        }

        var y = await ReadingsAsync(id, readings, ct);
        var points = new List<RunDetail.Point>();
        if (y.Length >= 3)
        {
            var analysis = StabilityAnalysis.Analyse(y, StabilityDataType.Frequency, run.GateTimeSeconds, [StabilityStatistic.Oadev], cancellationToken: ct);
            foreach (var p in analysis.Results[StabilityStatistic.Oadev])
            {
                var noise = analysis.Noise.FirstOrDefault(n => n.AveragingFactor == p.AveragingFactor)?.Alpha;
                points.Add(new RunDetail.Point(p.Tau, p.Deviation, p.DegreesOfFreedom, noise is { } a ? NoiseType.Name(a) : "not identified"));
            }
        }

        var list = ValueOf<Page<BudgetDto>>((await StoredBudgetsApi.List(budgets, json, 200, null, id, null, ct)).Result)?.Items ?? [];
        return Page<RunDetail>(new
        {
            Run = run, Points = points, Budgets = list, Templates = StoredBudgetsApi.Templates(catalog).Value ?? [], CanWrite = Can(http.User, Policies.Writer),
            Values = values ?? new Dictionary<string, string>(), Errors = errors, http.User,
        }, errors is null ? StatusCodes.Status200OK : StatusCodes.Status400BadRequest);
    }

    private static async Task<IResult> StabilityPngAsync(long id, CalibrationRunStore runs, ReadingStore readings, CertificateSetup setup, CancellationToken ct)
    {
        if (await runs.GetAsync(id, ct) is not { } run)
        {
            return Results.NotFound();
        }

        var y = await ReadingsAsync(id, readings, ct);
        var data = new Reports.StabilityPlot("", [], [], [], [], "");
        if (y.Length >= 3)
        {
            var points = StabilityAnalysis.Analyse(y, StabilityDataType.Frequency, run.Fields.GateTimeSeconds, [StabilityStatistic.Oadev], cancellationToken: ct).Results[StabilityStatistic.Oadev]
                .Where(p => p.Deviation > 0).ToArray();
            data = new Reports.StabilityPlot("", points.Select(p => p.Tau).ToArray(), points.Select(p => p.Deviation).ToArray(),
                points.Select(p => p.Interval.Low).ToArray(), points.Select(p => p.Interval.High).ToArray(), "");
        }

        return Results.File(Reports.CertificatePlots.Stability(data, setup.Fonts.Family, 250, 150), "image/png");
    }

    private static async Task<IResult> BuildBudgetAsync(long id, IFormCollection form, HttpContext http, IDbConnectionFactory database, TimeProvider time, TemplateCatalog catalog,
        CalibrationRunStore runs, ReadingStore readings, BudgetStore budgets, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        var values = Typed(form);
        string posture = values.GetValueOrDefault("posture", "as-calibrated");
        double? tilt = double.TryParse(values.GetValueOrDefault("tilt"), NumberStyles.Float, CultureInfo.InvariantCulture, out double t) ? t : null;
        var request = new BudgetBuildRequest(id, values.GetValueOrDefault("templateId"), new PosturePolicyDto(posture, null, posture == "tilt-limit" ? tilt : null), null, null);
        var result = await StoredBudgetsApi.Create(request, http, database, time, catalog, http.RequestServices.GetRequiredService<LabScope>(), readings, json, options, ct);
        if (ValueOf<BudgetDto>(result) is { } created)
        {
            return Results.Redirect($"/budgets/{created.Id}");
        }

        return await RunAsync(id, http, runs, readings, budgets, catalog, json, ct, values, ErrorsOf(result) ?? new Dictionary<string, string[]>());
    }

    private static async Task<IResult> BudgetAsync(long id, HttpContext http, BudgetStore budgets, CertificateStore certificates, IOptions<JsonOptions> json, CancellationToken ct,
        IReadOnlyDictionary<string, string>? values = null, IDictionary<string, string[]>? errors = null)
    {
        if (ValueOf<BudgetDto>((await StoredBudgetsApi.Get(id, budgets, json, http.Response, ct)).Result) is not { } budget)
        {
            return NotFound(http, $"No budget has the id {id}.");
        }

        var versions = ValueOf<BudgetVersionSummaryDto[]>((await StoredBudgetsApi.Versions(id, budgets, json, ct)).Result) ?? [];
        var run = budget.RunId;
        var certs = (ValueOf<Page<CertificateDto>>((await CertificatesApi.List(certificates, json, 200, null, null, null, ct)).Result)?.Items ?? [])
            .Where(c => c.BudgetId == id).ToArray();
        var policy = budget.Latest.Snapshot.TryGetProperty("posturePolicy", out var p) ? p : default;
        string kind = policy.ValueKind == JsonValueKind.Object && policy.TryGetProperty("kind", out var k) ? k.GetString() ?? "" : "as-calibrated";
        string postureWords = kind switch
        {
            "tilt-limit" => $"within {(policy.TryGetProperty("tiltLimitDegrees", out var d) ? d.GetDouble().ToString("G", CultureInfo.InvariantCulture) : "?")} degrees of the calibration posture",
            "known" => "a known posture of use",
            "any" => "any orientation",
            _ => "as calibrated (no orientation term)",
        };
        return Page<BudgetDetail>(new
        {
            Budget = budget, Versions = versions, Certificates = certs, PostureWords = postureWords, CanRevise = Can(http.User, Policies.Writer), CanApprove = Can(http.User, Policies.Approver), CanIssue = Can(http.User, Policies.Issuer),
            Values = values ?? new Dictionary<string, string>(), Errors = errors, http.User,
        }, errors is null ? StatusCodes.Status200OK : StatusCodes.Status400BadRequest);
    }

    private static async Task<IResult> ReviseAsync(long id, IFormCollection form, HttpContext http, IDbConnectionFactory database, TimeProvider time, TemplateCatalog catalog,
        ReadingStore readings, BudgetStore budgets, CertificateStore certificates, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        var values = Typed(form);
        string posture = values.GetValueOrDefault("posture", "");
        double? tilt = double.TryParse(values.GetValueOrDefault("tilt"), NumberStyles.Float, CultureInfo.InvariantCulture, out double t) ? t : null;
        string overrideName = values.GetValueOrDefault("overrideName", "");
        OverrideDto[]? overrides = null;
        if (overrideName.Length > 0)
        {
            double? u = double.TryParse(values.GetValueOrDefault("overrideU"), NumberStyles.Float, CultureInfo.InvariantCulture, out double x) ? x : null;
            if (u is null)
            {
                return await BudgetAsync(id, http, budgets, certificates, json, ct, values,
                    new Dictionary<string, string[]> { ["overrides[0].standardUncertainty"] = [$"Not a number: '{values.GetValueOrDefault("overrideU")}'."] });
            }

            overrides = [new OverrideDto(overrideName, values.GetValueOrDefault("overrideReason") is { Length: > 0 } why ? why : null, 0, "normal", u, null, null, null, null, "B")];
        }

        var request = new BudgetRevisionRequest(values.GetValueOrDefault("reason") is { Length: > 0 } reason ? reason : null,
            posture.Length > 0 ? new PosturePolicyDto(posture, null, posture == "tilt-limit" ? tilt : null) : null, overrides, null);
        // the form names the version it was made from: a version made meanwhile by someone else gets 412, as over the API
        http.Request.Headers.IfMatch = "\"" + values.GetValueOrDefault("latest", "0") + "\"";
        var result = await StoredBudgetsApi.Revise(id, request, http, database, time, catalog, http.RequestServices.GetRequiredService<LabScope>(), readings, json, options, ct);
        return ErrorsOf(result) is { } errors ? await BudgetAsync(id, http, budgets, certificates, json, ct, values, errors) : Results.Redirect($"/budgets/{id}");
    }

    private static async Task<IResult> DiffAsync(long id, int? from, int? to, HttpContext http, BudgetStore budgets, IOptions<JsonOptions> json, CancellationToken ct)
    {
        var result = (await StoredBudgetsApi.Diff(id, from, to, budgets, json, ct)).Result;
        return ValueOf<BudgetDiffDto>(result) is { } diff
            ? Page<BudgetDiff>(new { BudgetId = id, Diff = diff, http.User })
            : Page<Message>(new { Title = "No such versions", Text = string.Join(" ", (ErrorsOf(result) ?? new Dictionary<string, string[]>()).SelectMany(e => e.Value)), http.User },
                StatusCodes.Status404NotFound);
    }

    private static async Task<IResult> ApproveAsync(long id, IFormCollection form, HttpContext http, IDbConnectionFactory database, TimeProvider time, BudgetStore budgets,
        CertificateStore certificates, IOptions<JsonOptions> json, CancellationToken ct)
    {
        int number = int.TryParse(form["version"], CultureInfo.InvariantCulture, out int n) ? n : 0;
        var result = (await StoredBudgetsApi.Approve(id, number, new ApprovalRequest(form["meaning"].ToString() is { Length: > 0 } m ? m : null), http, database, time, json, ct)).Result;
        return ErrorsOf(result) is { } errors ? await BudgetAsync(id, http, budgets, certificates, json, ct, Typed(form), errors) : Results.Redirect($"/budgets/{id}");
    }

    private static async Task<IResult> IssueAsync(long id, IFormCollection form, HttpContext http, IDbConnectionFactory database, TimeProvider time, CertificateSetup setup,
        ReadingStore readings, BudgetStore budgets, CertificateStore certificates, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        var values = Typed(form);
        var errors = new Dictionary<string, string[]>(StringComparer.Ordinal);
        DateTimeOffset? received = DateTimeOffset.TryParseExact(values.GetValueOrDefault("receivedAt", "").Trim(), "yyyy-MM-dd", CultureInfo.InvariantCulture,
            DateTimeStyles.AssumeUniversal, out var r) ? r : null;
        if (received is null && values.GetValueOrDefault("receivedAt", "").Trim().Length > 0)
        {
            errors["receivedAt"] = ["Write the date as YYYY-MM-DD."];
        }

        long? Whole(string field, string api)
        {
            string text = values.GetValueOrDefault(field, "").Trim();
            if (text.Length == 0)
            {
                return null;
            }

            if (long.TryParse(text, NumberStyles.None, CultureInfo.InvariantCulture, out long n) && n > 0)
            {
                return n;
            }

            errors[api] = [$"Not a whole number: '{text}'."];
            return null;
        }

        bool adjusted = values.GetValueOrDefault("adjusted") == "yes";
        long? asLeftBudget = Whole("asLeftBudgetId", "asLeftBudgetId"), asLeftVersion = Whole("asLeftVersion", "asLeftVersion");
        if (errors.Count == 0)
        {
            int version = int.TryParse(values.GetValueOrDefault("version"), CultureInfo.InvariantCulture, out int v) ? v : 0;
            string rule = values.GetValueOrDefault("rule", "");
            string? lowRatioReason = values.GetValueOrDefault("lowRatioReason") is { Length: > 0 } why ? why : null;
            var request = new CertificateIssueRequest(id, version, received, values.GetValueOrDefault("itemCondition") is { Length: > 0 } c ? c : null, null, adjusted,
                adjusted ? asLeftBudget : null, adjusted ? (int?)asLeftVersion : null, null,
                rule.Length > 0 ? new DecisionRuleRequest(rule, null, lowRatioReason) : null, values.GetValueOrDefault("recall") == "yes" ? new RecallRequest(null) : null, null);
            var result = await CertificatesApi.Issue(request, http, database, time, setup, readings, json, options, ct);
            if (ValueOf<CertificateDto>(result) is { } issued)
            {
                return Results.Redirect($"/budgets/{id}#certificate-{issued.Id}");
            }

            errors = new Dictionary<string, string[]>(ErrorsOf(result) ?? new Dictionary<string, string[]>(), StringComparer.Ordinal);
        }

        return await BudgetAsync(id, http, budgets, certificates, json, ct, values, errors);
    }

    private static async Task<IResult> AuditAsync(string? entityType, string? actor, string? verify, HttpContext http, AuditLog log, CancellationToken ct)
    {
        var page = ValueOf<Page<AuditEntryDto>>((await AuditApi.List(log, 200, null, string.IsNullOrEmpty(entityType) ? null : entityType, null,
            string.IsNullOrEmpty(actor) ? null : actor, null, null, ct)).Result);
        AuditVerificationDto? verification = verify == "1" ? (await AuditApi.Verify(log, ct)).Value : null;
        return Page<AuditPage>(new { Entries = page?.Items ?? [], EntityType = entityType, Actor = actor, Verification = verification, http.User });
    }
}
