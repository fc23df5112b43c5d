using System.Net;

namespace CalBudget.Api.Tests;

/// <summary>Abuse limits: requests per key and sign-in attempts per client, 429 problem details with Retry-After.</summary>
public sealed class RateLimitTests : IDisposable
{
    private readonly ServiceFactory _factory = new(settings: new() { ["CalBudget:RequestsPer10Seconds"] = "5", ["CalBudget:SignInAttemptsPerMinute"] = "3" });

    public void Dispose() => _factory.Dispose();

    [Fact]
    public async Task AKeyBeyondItsLimitGets429WithRetryAfterAndOtherKeysAreNotSlowed()
    {
        var busy = await _factory.ClientAsync("integration");
        var other = await _factory.ClientAsync("integration");
        for (int i = 0; i < 5; i++)
        {
            Assert.Equal(HttpStatusCode.OK, (await busy.GetAsync("/api/v1/instruments")).StatusCode);
        }

        var refused = await busy.GetAsync("/api/v1/instruments");
        Assert.Equal(HttpStatusCode.TooManyRequests, refused.StatusCode);
        Assert.Equal("application/problem+json", refused.Content.Headers.ContentType!.MediaType);
        Assert.True(refused.Headers.RetryAfter!.Delta!.Value.TotalSeconds is > 0 and <= 10);
        Assert.Equal(HttpStatusCode.OK, (await other.GetAsync("/api/v1/instruments")).StatusCode);
    }

    [Fact]
    public async Task SignInAttemptsBeyondTheLimitGet429()
    {
        var client = _factory.CreateClient();
        var answers = new List<HttpStatusCode>();
        for (int i = 0; i < 4; i++)
        {
            answers.Add((await client.PostAsync("/sign-in", new FormUrlEncodedContent(new Dictionary<string, string> { ["name"] = "x", ["password"] = "y" }))).StatusCode);
        }

        Assert.DoesNotContain(HttpStatusCode.TooManyRequests, answers.Take(3));
        Assert.Equal(HttpStatusCode.TooManyRequests, answers[3]);
    }
}
