using System.Net;
using System.Net.Sockets;
using System.Text;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

public sealed class LimitsTests : IDisposable
{
    private const string Path = "/api/v1/budgets/evaluate";
    private readonly ServiceFactory _factory = new(settings: new() { ["CalBudget:MaxRequestBodyBytes"] = "4096" });

    public void Dispose() => _factory.Dispose();

    private static string Oversized() =>
        """{"measurand":"fractional frequency offset","contributions":[""" +
        string.Join(",", Enumerable.Range(0, 200).Select(i => $$"""{"name":"c{{i}}","distribution":"normal","standardUncertainty":1e-12}""")) + "]}";

    [Fact]
    public async Task BodyOverTheLimitWithALengthIs413()
    {
        var client = await _factory.ClientAsync("technician");
        await Json.ProblemAsync(await client.PostAsync(Path, Json.Body(Oversized())), HttpStatusCode.RequestEntityTooLarge);
    }

    [Fact]
    public async Task BodyOverTheLimitWithoutALengthIs413()
    {
        var client = await _factory.ClientAsync("technician");
        var content = new UnsizedContent(Encoding.UTF8.GetBytes(Oversized()));
        Assert.Null(content.Headers.ContentLength);
        await Json.ProblemAsync(await client.PostAsync(Path, content), HttpStatusCode.RequestEntityTooLarge);
    }

    [Fact]
    public async Task BodyUnderTheLimitIsAccepted()
    {
        var client = await _factory.ClientAsync("technician");
        await Json.PostAsync(client, Path, """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}]}""", HttpStatusCode.OK);
    }

    [Theory]
    [InlineData("text/plain")]
    [InlineData("application/xml")]
    public async Task NonJsonContentTypeIs415(string type)
    {
        var client = await _factory.ClientAsync("technician");
        var content = new StringContent("""{"contributions":[]}""", Encoding.UTF8, type);
        await Json.ProblemAsync(await client.PostAsync(Path, content), HttpStatusCode.UnsupportedMediaType);
    }

    // Against Kestrel itself: a client that announces an oversized body and waits on Expect: 100-continue must get the
    // final 413 at once, never "100 Continue".
    [Fact]
    public async Task AnnouncedOversizedBodyWithExpectContinueGets413WithoutContinue()
    {
        using var factory = new ServiceFactory(settings: new() { ["CalBudget:MaxRequestBodyBytes"] = "4096" });
        factory.UseKestrel(0);
        factory.StartServer();
        string key = await factory.Keys.CreateAsync("expect", "technician");
        var address = new Uri(factory.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses.First());

        using var tcp = new TcpClient();
        await tcp.ConnectAsync(IPAddress.Loopback, address.Port);
        await using var stream = tcp.GetStream();
        string head = $"POST {Path} HTTP/1.1\r\nHost: localhost\r\nAuthorization: Bearer {key}\r\n" +
                      "Content-Type: application/json\r\nContent-Length: 50000000\r\nExpect: 100-continue\r\n\r\n";
        await stream.WriteAsync(Encoding.ASCII.GetBytes(head));
        var buffer = new byte[8192];
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(20));
        int n = await stream.ReadAsync(buffer, timeout.Token);
        string answer = Encoding.ASCII.GetString(buffer, 0, n);
        Assert.StartsWith("HTTP/1.1 413", answer, StringComparison.Ordinal);
        Assert.DoesNotContain("100 Continue", answer, StringComparison.Ordinal);
        Assert.Contains("application/problem+json", answer, StringComparison.Ordinal);
    }
}

/// <summary>A JSON body sent without Content-Length (chunked), so only counting while reading can catch its size.</summary>
internal sealed class UnsizedContent : HttpContent
{
    private readonly byte[] _bytes;

    public UnsizedContent(byte[] bytes)
    {
        _bytes = bytes;
        Headers.ContentType = Json.JsonType;
    }

    protected override Task SerializeToStreamAsync(Stream stream, TransportContext? context) => stream.WriteAsync(_bytes, 0, _bytes.Length);

    protected override bool TryComputeLength(out long length)
    {
        length = 0;
        return false;
    }
}
