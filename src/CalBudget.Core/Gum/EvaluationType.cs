namespace CalBudget.Core.Gum;

/// <summary>How a standard uncertainty was evaluated (JCGM 100 2.3.2 and 2.3.3).</summary>
public enum EvaluationType
{
    /// <summary>Type A: statistical analysis of a series of observations.</summary>
    A,
    /// <summary>Type B: any other means (certificates, specifications, experience).</summary>
    B,
}
