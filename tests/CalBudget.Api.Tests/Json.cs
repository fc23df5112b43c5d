using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace CalBudget.Api.Tests;

internal static class Json
{
    public static StringContent Body(string json) => new(json, Encoding.UTF8, "application/json");

    public static async Task<JsonNode> PostAsync(HttpClient client, string path, string json, HttpStatusCode expected)
    {
        using var response = await client.PostAsync(path, Body(json));
        return await ReadAsync(response, expected);
    }

    public static async Task<JsonNode> ReadAsync(HttpResponseMessage response, HttpStatusCode expected)
    {
        string text = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == expected, $"expected {(int)expected}, got {(int)response.StatusCode}: {text}");
        return JsonNode.Parse(text)!;
    }

    /// <summary>Checks an RFC 9457 problem answer and returns it.</summary>
    public static async Task<JsonNode> ProblemAsync(HttpResponseMessage response, HttpStatusCode expected)
    {
        var node = await ReadAsync(response, expected);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        Assert.Equal((int)expected, node["status"]!.GetValue<int>());
        Assert.False(string.IsNullOrEmpty(node["title"]?.GetValue<string>()));
        return node;
    }

    public static IEnumerable<string> ErrorFields(JsonNode problem) =>
        problem["errors"] is JsonObject errors ? errors.Select(e => e.Key) : [];

    public static double Number(JsonNode? node) => node!.GetValue<double>();

    public static MediaTypeHeaderValue JsonType => new("application/json");

    public static string Serialize(object value) => JsonSerializer.Serialize(value);
}
