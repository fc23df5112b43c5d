namespace CalBudget.Core.Stability;

/// <summary>The frequency-stability statistics of NIST SP 1065 (W. J. Riley, 2008), names as in IEEE Std 1139.</summary>
public enum StabilityStatistic
{
    /// <summary>Allan deviation, non-overlapping (SP 1065 eq. 6).</summary>
    Adev,
    /// <summary>Overlapping Allan deviation (SP 1065 eq. 8).</summary>
    Oadev,
    /// <summary>Modified Allan deviation (SP 1065 eq. 13).</summary>
    Mdev,
    /// <summary>Time deviation, tau / sqrt(3) times MDEV (SP 1065 eq. 16).</summary>
    Tdev,
    /// <summary>Hadamard deviation, non-overlapping (SP 1065 eq. 17).</summary>
    Hdev,
    /// <summary>Overlapping Hadamard deviation (SP 1065 eq. 18).</summary>
    Ohdev,
    /// <summary>Total deviation, from phase extended by reflection at both ends (SP 1065 eq. 25).</summary>
    Totdev,
}

/// <summary>Whether the values are fractional frequency y_i or phase (time error) x_i in seconds.</summary>
public enum StabilityDataType
{
    /// <summary>Fractional frequency, dimensionless, each the average over tau0.</summary>
    Frequency,
    /// <summary>Phase (time error) in seconds, sampled every tau0.</summary>
    Phase,
}

/// <summary>The power-law noise types, by the exponent alpha of S_y(f) proportional to f^alpha (IEEE Std 1139).</summary>
public static class NoiseType
{
    /// <summary>The trade's name of the noise with exponent <paramref name="alpha"/>.</summary>
    public static string Name(int alpha) => alpha switch
    {
        2 => "white PM",
        1 => "flicker PM",
        0 => "white FM",
        -1 => "flicker FM",
        -2 => "random-walk FM",
        -3 => "flicker walk FM",
        -4 => "random run FM",
        _ => $"alpha {alpha}",
    };
}
