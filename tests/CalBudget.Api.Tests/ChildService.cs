using System.Diagnostics;
using System.Net;
using System.Net.Sockets;

namespace CalBudget.Api.Tests;

/// <summary>The real executable as a child process with a data directory of its own (Production environment).</summary>
public static class ChildService
{
    /// <summary>Starts <c>CalBudget.Api.dll</c> with <paramref name="args"/>; output is read (and dropped) unless it is a command.</summary>
    public static Process Start(string dataDirectory, params string[] args)
    {
        var info = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        info.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "CalBudget.Api.dll"));
        foreach (var a in args)
        {
            info.ArgumentList.Add(a);
        }

        info.Environment["CalBudget__DataDirectory"] = dataDirectory;
        info.Environment["DOTNET_ENVIRONMENT"] = "Production";
        info.Environment["ASPNETCORE_ENVIRONMENT"] = "Production";
        info.Environment["CalBudget__RequestsPer10Seconds"] = "1000000";
        var process = Process.Start(info)!;
        if (args is not ["keys", ..])
        {
            process.OutputDataReceived += (_, _) => { };
            process.ErrorDataReceived += (_, _) => { };
            process.BeginOutputReadLine();
            process.BeginErrorReadLine();
        }

        return process;
    }

    /// <summary>Makes a key with the command line; the key.</summary>
    public static async Task<string> KeyAsync(string dataDirectory, string role, string name)
    {
        using var keys = Start(dataDirectory, "keys", "create", "--role", role, "--name", name, "--holder", name);
        string output = await keys.StandardOutput.ReadToEndAsync();
        await keys.WaitForExitAsync();
        Assert.Equal(0, keys.ExitCode);
        return output.TrimEnd().Split('\n')[^1].Trim();
    }

    /// <summary>A loopback port nobody listens on.</summary>
    public static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    /// <summary>Waits (up to 30 s) for /health to answer 200.</summary>
    public static async Task WaitHealthyAsync(HttpClient client)
    {
        ArgumentNullException.ThrowIfNull(client);
        var deadline = DateTime.UtcNow.AddSeconds(30);
        while (true)
        {
            try
            {
                if ((await client.GetAsync("/health")).IsSuccessStatusCode)
                {
                    return;
                }
            }
            catch (HttpRequestException) when (DateTime.UtcNow < deadline)
            {
            }

            Assert.True(DateTime.UtcNow < deadline, "the service did not start");
            await Task.Delay(100);
        }
    }
}
