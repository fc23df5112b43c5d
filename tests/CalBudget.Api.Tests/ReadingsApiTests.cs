using System.Globalization;
using System.Net;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json.Nodes;
using CalBudget.Api.Calibrations;
using Microsoft.Data.Sqlite;

namespace CalBudget.Api.Tests;

public sealed class ReadingsApiTests : IDisposable
{
    private readonly ServiceFactory _factory = new(settings: new() { ["CalBudget:MaxReadingsUploadBytes"] = "100000", ["CalBudget:MaxRequestBodyBytes"] = "50000" });

    public void Dispose() => _factory.Dispose();

    private static StringContent Csv(string text) => new(text, Encoding.UTF8, "text/csv");

    private static string Readings(int count, double offsetHz = 0.0231, string header = "timestamp,frequencyHz")
    {
        var text = new StringBuilder(header).Append('\n');
        for (int k = 0; k < count; k++)
        {
            text.Append(CultureInfo.InvariantCulture, $"2026-11-30T09:{k / 60:00}:{k % 60:00}.5Z,{10e6 + offsetHz + 1e-5 * (k % 7):F6}\n");
        }

        return text.ToString();
    }

    private async Task<(HttpClient Client, long Run)> RunAsync()
    {
        var tech = await _factory.ClientAsync("technician");
        return (tech, await LabRecords.RunAsync(tech));
    }

    private static async Task AssertNothingStoredAsync(HttpClient client, long run)
    {
        var uploads = await Json.ReadAsync(await client.GetAsync($"/api/v1/calibrations/{run}/readings/uploads"), HttpStatusCode.OK);
        Assert.Empty(uploads.AsArray());
        var record = await Json.ReadAsync(await client.GetAsync($"/api/v1/calibrations/{run}"), HttpStatusCode.OK);
        Assert.Null(record["readings"]);
        await Json.ProblemAsync(await client.GetAsync($"/api/v1/calibrations/{run}/readings"), HttpStatusCode.NotFound);
    }

    [Fact]
    public async Task ACsvUploadIsKeptExactlyAsReceivedWithItsSha256()
    {
        var (tech, run) = await RunAsync();
        string text = Readings(100);
        using var response = await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Csv(text));
        var upload = await Json.ReadAsync(response, HttpStatusCode.Created);
        byte[] bytes = Encoding.UTF8.GetBytes(text);
        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(bytes)), upload["sha256"]!.GetValue<string>());
        Assert.Equal(bytes.Length, upload["byteCount"]!.GetValue<long>());
        Assert.Equal(100, upload["count"]!.GetValue<long>());
        Assert.Equal("frequencyHz", upload["quantity"]!.GetValue<string>());
        Assert.Equal("text/csv", upload["mediaType"]!.GetValue<string>());

        using var content = await tech.GetAsync(response.Headers.Location + "/content");
        Assert.Equal(HttpStatusCode.OK, content.StatusCode);
        Assert.Equal(bytes, await content.Content.ReadAsByteArrayAsync());
        Assert.Equal($"sha-256=:{Convert.ToBase64String(SHA256.HashData(bytes))}:", content.Headers.GetValues("Repr-Digest").Single());

        var record = await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{run}"), HttpStatusCode.OK);
        Assert.Equal(upload["id"]!.GetValue<long>(), record["readings"]!["uploadId"]!.GetValue<long>());
        Assert.Equal(100, record["readings"]!["count"]!.GetValue<long>());
    }

    [Fact]
    public async Task FrequenciesBecomeFractionalOffsetsWithTheInstrumentsNominalFrequency()
    {
        var (tech, run) = await RunAsync();
        await Json.ReadAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Csv(Readings(10))), HttpStatusCode.Created);
        var table = await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{run}/readings"), HttpStatusCode.OK);
        Assert.Equal(10, table["count"]!.GetValue<long>());
        var readings = table["readings"]!.AsArray();
        for (int k = 0; k < readings.Count; k++)
        {
            double f = Json.Number(readings[k]!["frequencyHz"]);
            Assert.Equal(10e6 + 0.0231 + 1e-5 * (k % 7), f, 1e-9);
            // y = (f - f0) / f0 (the definition of the fractional frequency offset, IEEE 1139), f0 = 10 MHz, taken from the
            // decimal text: 10000000.023100 Hz is y = 2.31e-9 exactly (to the double nearest to it)
            Assert.Equal((double)((0.0231m + 0.00001m * (k % 7)) / 10_000_000m), Json.Number(readings[k]!["fractionalOffset"]));
            Assert.Equal(new DateTimeOffset(2026, 11, 30, 9, 0, k, 500, TimeSpan.Zero), DateTimeOffset.Parse(readings[k]!["timestamp"]!.GetValue<string>(), CultureInfo.InvariantCulture));
        }
    }

    [Theory]
    [InlineData("10000000.000023", 2.3e-12)]
    [InlineData("9999999.99999", -1e-12)]
    [InlineData("1.0000000000000023E7", 2.3e-15)]
    public async Task TheOffsetOfAFrequencyIsTakenFromItsDecimalText(string frequency, double expected)
    {
        // y = (f - f0) / f0 with f0 = 10 MHz: the decimal difference is exact, so y is the double nearest to it
        var (tech, run) = await RunAsync();
        await Json.ReadAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Csv($"timestamp,frequencyHz\n2026-11-30T09:00:01Z,{frequency}\n")), HttpStatusCode.Created);
        var table = await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{run}/readings"), HttpStatusCode.OK);
        Assert.Equal(expected, Json.Number(table["readings"]![0]!["fractionalOffset"]));
    }

    [Fact]
    public void TheExactOffsetAgreesWithDecimalArithmetic()
    {
        // reference: System.Decimal's exact difference and 28-digit quotient, converted to double (within one ulp)
        var random = new Random(11);
        var rules = new ReadingRules(10e6);
        for (int n = 0; n < 20_000; n++)
        {
            decimal f = 10_000_000m + (decimal)Math.Round((random.NextDouble() - 0.5) * 2e-3, random.Next(0, 10));
            string text = f.ToString(CultureInfo.InvariantCulture);
            double y = rules.ExactOffset(Encoding.ASCII.GetBytes(text))!.Value;
            double reference = (double)((f - 10_000_000m) / 10_000_000m);
            Assert.True(Math.Abs(y - reference) <= Math.Abs(Math.BitIncrement(reference) - reference), $"{text}: {y:R} against {reference:R}");
        }

        Assert.Null(rules.ExactOffset("1O000000"u8));
    }

    [Fact]
    public async Task ReadingsAreServedInTheFormatAskedFor()
    {
        var (tech, run) = await RunAsync();
        await Json.ReadAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings",
            Csv("fractionalOffset,timestamp,gateTimeSeconds\n1.5e-11,2026-11-30T09:00:10+01:00,10\n-2e-12,2026-11-30T08:00:20Z,\n")), HttpStatusCode.Created);
        var ask = new HttpRequestMessage(HttpMethod.Get, $"/api/v1/calibrations/{run}/readings");
        ask.Headers.Accept.ParseAdd("text/csv");
        using var csv = await tech.SendAsync(ask);
        Assert.Equal("text/csv", csv.Content.Headers.ContentType!.MediaType);
        Assert.Equal("timestamp,fractionalOffset,frequencyHz,gateTimeSeconds\n2026-11-30T08:00:10Z,1.5E-11,,10\n2026-11-30T08:00:20Z,-2E-12,,\n",
            await csv.Content.ReadAsStringAsync());

        var json = await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{run}/readings"), HttpStatusCode.OK);
        Assert.Equal("fractionalOffset", json["quantity"]!.GetValue<string>());
        Assert.Equal(10, Json.Number(json["readings"]![0]!["gateTimeSeconds"]));
        Assert.Null(json["readings"]![1]!["gateTimeSeconds"]);

        var xml = new HttpRequestMessage(HttpMethod.Get, $"/api/v1/calibrations/{run}/readings");
        xml.Headers.Accept.ParseAdd("application/xml");
        await Json.ProblemAsync(await tech.SendAsync(xml), HttpStatusCode.NotAcceptable);
    }

    [Fact]
    public async Task JsonReadingsAreAcceptedAndKeptAsReceived()
    {
        var (tech, run) = await RunAsync();
        const string body = """{"readings":[{"timestamp":"2026-11-30T09:00:01Z","fractionalOffset":1e-11},{"timestamp":"2026-11-30T09:00:02Z","fractionalOffset":1.2e-11}]}""";
        using var response = await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Json.Body(body));
        var upload = await Json.ReadAsync(response, HttpStatusCode.Created);
        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(body))), upload["sha256"]!.GetValue<string>());
        Assert.Equal("application/json", upload["mediaType"]!.GetValue<string>());
        using var content = await tech.GetAsync(response.Headers.Location + "/content");
        Assert.Equal(body, await content.Content.ReadAsStringAsync());
        var table = await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{run}/readings"), HttpStatusCode.OK);
        Assert.Equal([1e-11, 1.2e-11], table["readings"]!.AsArray().Select(r => Json.Number(r!["fractionalOffset"])));
    }

    [Fact]
    public async Task ACorrectionIsANewUploadWithAReasonAndTheOldOneStays()
    {
        var (tech, run) = await RunAsync();
        string path = $"/api/v1/calibrations/{run}/readings";
        var first = await Json.ReadAsync(await tech.PostAsync(path, Csv(Readings(5))), HttpStatusCode.Created);
        var refused = await Json.ProblemAsync(await tech.PostAsync(path, Csv(Readings(6))), HttpStatusCode.BadRequest);
        Assert.Equal(["reason"], Json.ErrorFields(refused));
        var second = await Json.ReadAsync(await tech.PostAsync($"{path}?reason=counter%20export%20truncated", Csv(Readings(6))), HttpStatusCode.Created);
        Assert.Equal(first["id"]!.GetValue<long>(), second["supersedesId"]!.GetValue<long>());
        Assert.Equal("counter export truncated", second["reason"]!.GetValue<string>());

        var uploads = await Json.ReadAsync(await tech.GetAsync($"{path}/uploads"), HttpStatusCode.OK);
        Assert.Equal([5L, 6L], uploads.AsArray().Select(u => u!["count"]!.GetValue<long>()));
        var current = await Json.ReadAsync(await tech.GetAsync(path), HttpStatusCode.OK);
        Assert.Equal(6, current["count"]!.GetValue<long>());
        var old = await Json.ReadAsync(await tech.GetAsync($"{path}?upload={first["id"]}"), HttpStatusCode.OK);
        Assert.Equal(5, old["count"]!.GetValue<long>());
        var record = await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{run}"), HttpStatusCode.OK);
        Assert.Equal(2, record["readings"]!["uploads"]!.GetValue<long>());
    }

    [Fact]
    public async Task AnUploadWithAnIdempotencyKeyIsStoredOnce()
    {
        var (tech, run) = await RunAsync();
        async Task<HttpResponseMessage> Send(string text)
        {
            var post = new HttpRequestMessage(HttpMethod.Post, $"/api/v1/calibrations/{run}/readings") { Content = Csv(text) };
            post.Headers.Add("Idempotency-Key", "upload-1");
            return await tech.SendAsync(post);
        }

        var first = await Json.ReadAsync(await Send(Readings(4)), HttpStatusCode.Created);
        var again = await Json.ReadAsync(await Send(Readings(4)), HttpStatusCode.Created);
        Assert.Equal(first.ToJsonString(), again.ToJsonString());
        await Json.ProblemAsync(await Send(Readings(3)), HttpStatusCode.UnprocessableEntity);
        var uploads = await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{run}/readings/uploads"), HttpStatusCode.OK);
        Assert.Single(uploads.AsArray());
    }

    public static TheoryData<string, HttpStatusCode, string, int?> BadFiles => new()
    {
        { "timestamp,frequencyHz\n2026-11-30T09:00:01Z,10000000.1\n2026-11-30T09:00:02Z,1O000000.1\n", HttpStatusCode.BadRequest, "line 3: frequencyHz", 3 },
        { "timestamp,frequencyHz\n2026-11-30T09:00:01Z,10000000.1\n2026-11-30 09:00,10000000.1\n", HttpStatusCode.BadRequest, "line 3: timestamp", 3 },
        { "timestamp,frequencyHz\n2026-11-30T09:00:01,10000000.1\n", HttpStatusCode.BadRequest, "line 2: timestamp", 2 },
        { "timestamp,frequencyHz\n2026-11-30T09:00:01Z,-10000000.1\n", HttpStatusCode.BadRequest, "line 2: frequencyHz", 2 },
        { "timestamp,frequencyHz\n2026-11-30T09:00:01Z\n", HttpStatusCode.BadRequest, "line 2", 2 },
        { "timestamp,frequencyHz,gateTimeSeconds\n2026-11-30T09:00:01Z,10000000.1,0\n", HttpStatusCode.BadRequest, "line 2: gateTimeSeconds", 2 },
        { "frequencyHz\n10000000.1\n", HttpStatusCode.BadRequest, "timestamp", 1 },
        { "timestamp\n2026-11-30T09:00:01Z\n", HttpStatusCode.BadRequest, "frequencyHz", 1 },
        { "timestamp,frequencyHz,temperature\n2026-11-30T09:00:01Z,10000000.1,23\n", HttpStatusCode.BadRequest, "line 1: header", 1 },
        { "timestamp,frequencyHz,fractionalOffset\n2026-11-30T09:00:01Z,10000000.1,1e-8\n", HttpStatusCode.BadRequest, "line 1: header", 1 },
        { "timestamp,frequencyHz\n2026-11-30T09:00:02Z,10000000.1\n2026-11-30T09:00:01Z,10000000.1\n", HttpStatusCode.UnprocessableEntity, "line 3: timestamp", 3 },
        { "timestamp,frequencyHz\n2026-11-30T09:00:01Z,10000000.1\n2026-11-30T10:00:01+01:00,10000000.1\n", HttpStatusCode.UnprocessableEntity, "line 3: timestamp", 3 },
        { "timestamp,frequencyHz\n", HttpStatusCode.BadRequest, "body", 1 },
        { "\n\n", HttpStatusCode.BadRequest, "body", null },
        { "", HttpStatusCode.BadRequest, "body", null },
        { "timestamp,frequencyHz\n" + new string('9', 5000) + "\n", HttpStatusCode.BadRequest, "line 2", 2 },
    };

    [Theory]
    [MemberData(nameof(BadFiles))]
    public async Task ABadFileIsRefusedNamingTheFieldAndLineAndLeavesNothing(string text, HttpStatusCode status, string field, int? line)
    {
        var (tech, run) = await RunAsync();
        var problem = await Json.ProblemAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Csv(text)), status);
        Assert.Equal([field], Json.ErrorFields(problem));
        Assert.Equal(line, problem["line"]?.GetValue<int>());
        await AssertNothingStoredAsync(tech, run);
    }

    [Theory]
    [InlineData("""{"readings":[]}""", "readings")]
    [InlineData("""{"readings":[{"timestamp":"2026-11-30T09:00:01Z"}]}""", "readings[0].frequencyHz")]
    [InlineData("""{"readings":[{"timestamp":"2026-11-30T09:00:01Z","frequencyHz":1e7,"fractionalOffset":0}]}""", "readings[0].frequencyHz")]
    [InlineData("""{"readings":[{"timestamp":"2026-11-30T09:00:01Z","frequencyHz":1e7},{"timestamp":"2026-11-30T09:00:02Z","fractionalOffset":0}]}""", "readings[1].fractionalOffset")]
    [InlineData("""{"readings":[{"fractionalOffset":0}]}""", "readings[0].timestamp")]
    [InlineData("""{"readings":[{"timestamp":"yesterday","fractionalOffset":0}]}""", "readings[0].timestamp")]
    [InlineData("""{"readings":[{"timestamp":"2026-11-30T09:00:01Z","fractionalOffset":"0"}]}""", "readings[0].fractionalOffset")]
    [InlineData("""{"readings":[{"timestamp":"2026-11-30T09:00:01Z","fractionalOffset":0,"temperature":23}]}""", "readings[0].temperature")]
    [InlineData("""{"readings":[{"timestamp":"2026-11-30T09:00:01Z","fractionalOffset":0}""", "readings[1]")]
    public async Task BadJsonReadingsAreRefusedNamingTheField(string body, string field)
    {
        var (tech, run) = await RunAsync();
        var problem = await Json.ProblemAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Json.Body(body)), HttpStatusCode.BadRequest);
        Assert.Equal([field], Json.ErrorFields(problem));
        await AssertNothingStoredAsync(tech, run);
    }

    [Fact]
    public async Task AFileOverTheLimitIsRefusedWith413AndLeavesNothing()
    {
        var (tech, run) = await RunAsync();
        string big = Readings(3000);
        Assert.True(big.Length > 100_000);
        await Json.ProblemAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Csv(big)), HttpStatusCode.RequestEntityTooLarge);
        // JSON keeps the general limit (50,000 bytes here) even where CSV may be larger
        var json = "{\"readings\":[" + string.Join(",", Enumerable.Range(0, 1200).Select(k => $"{{\"timestamp\":\"2026-11-30T09:{k / 60:00}:{k % 60:00}Z\",\"fractionalOffset\":1e-11}}")) + "]}";
        Assert.InRange(json.Length, 50_001, 99_999);
        await Json.ProblemAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Json.Body(json)), HttpStatusCode.RequestEntityTooLarge);
        // a CSV under the upload limit but over the general one is fine
        string medium = Readings(1500);
        Assert.InRange(medium.Length, 50_001, 99_999);
        await Json.ReadAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Csv(medium)), HttpStatusCode.Created);
    }

    [Theory]
    [InlineData("text/plain")]
    [InlineData("text/csv; charset=latin1")]
    public async Task OtherMediaTypesAreRefusedWith415(string type)
    {
        var (tech, run) = await RunAsync();
        using var content = new ByteArrayContent(Encoding.UTF8.GetBytes(Readings(2)));
        content.Headers.ContentType = System.Net.Http.Headers.MediaTypeHeaderValue.Parse(type);
        await Json.ProblemAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", content), HttpStatusCode.UnsupportedMediaType);
    }

    [Fact]
    public async Task AnUnknownRunIs404()
    {
        var tech = await _factory.ClientAsync("technician");
        await Json.ProblemAsync(await tech.PostAsync("/api/v1/calibrations/777/readings", Csv(Readings(2))), HttpStatusCode.NotFound);
        await Json.ProblemAsync(await tech.GetAsync("/api/v1/calibrations/777/readings"), HttpStatusCode.NotFound);
        await Json.ProblemAsync(await tech.GetAsync("/api/v1/calibrations/777/readings/uploads/1/content"), HttpStatusCode.NotFound);
    }

    [Fact]
    public async Task StoredReadingsCannotBeEditedOrDeletedEvenFromSql()
    {
        var (tech, run) = await RunAsync();
        await Json.ReadAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", Csv(Readings(3))), HttpStatusCode.Created);
        using var connection = new SqliteConnection($"Data Source={System.IO.Path.Combine(_factory.DataDirectory, "calbudget.db")}");
        connection.Open();
        foreach (string sql in new[]
        {
            "UPDATE reading_blocks SET count = 2",
            "DELETE FROM reading_blocks",
            "UPDATE reading_upload_parts SET bytes = x'00'",
            "DELETE FROM reading_upload_parts",
            "UPDATE reading_uploads SET reason = 'edited'",
            "DELETE FROM reading_uploads",
        })
        {
            using var command = connection.CreateCommand();
            command.CommandText = sql;
            var ex = Assert.Throws<SqliteException>(() => command.ExecuteNonQuery());
            Assert.Contains("never", ex.Message, StringComparison.Ordinal);
        }
    }

    [Theory]
    [InlineData("2026-11-30T09:00:01Z", 2026, 11, 30, 9, 0, 1, 0L)]
    [InlineData("2026-11-30t09:00:01.1234567z", 2026, 11, 30, 9, 0, 1, 1234567L)]
    [InlineData("2026-11-30T09:00:01.5+01:30", 2026, 11, 30, 7, 30, 1, 5000000L)]
    [InlineData("2024-02-29T23:59:59.999999999-00:00", 2024, 2, 29, 23, 59, 59, 9999999L)]
    public void Rfc3339TimesAreReadToTheTick(string text, int year, int month, int day, int hour, int minute, int second, long ticks)
    {
        // RFC 3339 section 5.6 grammar; fractions beyond 100 ns are truncated
        Assert.True(Rfc3339.TryParse(Encoding.ASCII.GetBytes(text), out var value));
        Assert.Equal(new DateTimeOffset(year, month, day, hour, minute, second, TimeSpan.Zero).AddTicks(ticks), value);
    }

    [Theory]
    [InlineData("2026-11-30T09:00:01")]
    [InlineData("2026-11-30")]
    [InlineData("2026-02-29T09:00:01Z")]
    [InlineData("2026-11-30T24:00:00Z")]
    [InlineData("2026-11-30T09:00:60Z")]
    [InlineData("2026-11-30T09:00:01.Z")]
    [InlineData("2026-11-30T09:00:01+0100")]
    [InlineData("30/11/2026 09:00:01")]
    [InlineData("2026-11-30T09:00:01Zjunk")]
    public void NonRfc3339TimesAreRefused(string text) =>
        Assert.False(Rfc3339.TryParse(Encoding.ASCII.GetBytes(text), out _));
}
