using BenchmarkDotNet.Running;

// dotnet run -c Release --project tests/CalBudget.Benchmarks -- --filter '*'
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
