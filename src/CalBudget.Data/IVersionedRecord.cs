namespace CalBudget.Data;

/// <summary>What every versioned, retirable record offers: its version (the ETag) and whether it is retired.</summary>
public interface IVersionedRecord
{
    /// <summary>The current version, incremented by every change.</summary>
    long Version { get; }

    /// <summary>When retired, or null.</summary>
    DateTimeOffset? RetiredAt { get; }
}
