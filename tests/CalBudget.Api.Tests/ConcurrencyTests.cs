using System.Net;

namespace CalBudget.Api.Tests;

/// <summary>
/// Concurrent staff and LIMS traffic: of two edits made from the same version exactly one wins and the other gets 412
/// (no lost update); many writers at once are serialised by SQLite's write lock inside its busy timeout, never a 500.
/// </summary>
public sealed class ConcurrencyTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    private static string Instrument(string asset, string customer) => LabRecords.PlainInstrumentBody(asset, customer);

    [Fact]
    public async Task OfTwoEditsFromTheSameVersionExactlyOneWins()
    {
        var staff = await _factory.ClientAsync("technician");
        var lims = await _factory.ClientAsync("integration");
        long id = (await Json.PostAsync(staff, "/api/v1/instruments", Instrument("CB-0800", "Harbour Test House"), HttpStatusCode.Created))["id"]!.GetValue<long>();
        for (int round = 0; round < 10; round++)
        {
            var current = await staff.GetAsync($"/api/v1/instruments/{id}");
            string etag = current.Headers.ETag!.Tag;
            HttpRequestMessage Put(string customer)
            {
                var request = new HttpRequestMessage(HttpMethod.Put, $"/api/v1/instruments/{id}") { Content = Json.Body(Instrument("CB-0800", customer)) };
                request.Headers.TryAddWithoutValidation("If-Match", etag);
                return request;
            }

            var answers = await Task.WhenAll(staff.SendAsync(Put($"staff {round}")), lims.SendAsync(Put($"lims {round}")));
            var codes = answers.Select(a => a.StatusCode).Order().ToArray();
            Assert.Equal([HttpStatusCode.OK, HttpStatusCode.PreconditionFailed], codes);
            string winner = answers[0].StatusCode == HttpStatusCode.OK ? $"staff {round}" : $"lims {round}";
            var stored = await Json.ReadAsync(await staff.GetAsync($"/api/v1/instruments/{id}"), HttpStatusCode.OK);
            Assert.Equal(winner, stored["customer"]!.GetValue<string>());
        }
    }

    [Fact]
    public async Task ManyWritersAtOnceAreAllServedAndNothingIsLost()
    {
        var clients = await Task.WhenAll(Enumerable.Range(0, 8).Select(i => _factory.ClientAsync(i % 2 == 0 ? "technician" : "integration")));
        var answers = await Task.WhenAll(Enumerable.Range(0, 80).Select(i =>
            clients[i % clients.Length].PostAsync("/api/v1/instruments", Json.Body(Instrument($"CB-1{i:000}", "Westmere University")))));
        Assert.All(answers, a => Assert.Equal(HttpStatusCode.Created, a.StatusCode));
        var list = await Json.ReadAsync(await clients[0].GetAsync("/api/v1/instruments?limit=200&customer=Westmere%20University"), HttpStatusCode.OK);
        Assert.Equal(80, list["items"]!.AsArray().Count);
        var auditor = await _factory.ClientAsync("auditor");
        Assert.True((await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit/verify"), HttpStatusCode.OK))["intact"]!.GetValue<bool>());
    }
}
