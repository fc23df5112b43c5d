using System.Globalization;

namespace CalBudget.Core.Orientation;

/// <summary>A vector in the instrument's body frame: +x to the right seen from the front panel, +y toward the rear, +z up through the top cover.</summary>
/// <param name="X">Component along +x.</param>
/// <param name="Y">Component along +y.</param>
/// <param name="Z">Component along +z.</param>
public readonly record struct Vector3D(double X, double Y, double Z)
{
    /// <summary>Dot product.</summary>
    public double Dot(Vector3D other) => X * other.X + Y * other.Y + Z * other.Z;

    /// <summary>Euclidean length.</summary>
    public double Length => Math.Sqrt(Dot(this));

    /// <summary>Sum.</summary>
    public static Vector3D operator +(Vector3D a, Vector3D b) => new(a.X + b.X, a.Y + b.Y, a.Z + b.Z);

    /// <summary>Difference.</summary>
    public static Vector3D operator -(Vector3D a, Vector3D b) => new(a.X - b.X, a.Y - b.Y, a.Z - b.Z);

    /// <summary>Scaling.</summary>
    public static Vector3D operator *(double k, Vector3D a) => new(k * a.X, k * a.Y, k * a.Z);

    /// <summary>Cross product.</summary>
    public Vector3D Cross(Vector3D b) => new(Y * b.Z - Z * b.Y, Z * b.X - X * b.Z, X * b.Y - Y * b.X);

    /// <summary>The components as an array [x, y, z].</summary>
    public double[] ToArray() => [X, Y, Z];

    /// <inheritdoc />
    public override string ToString() => string.Create(CultureInfo.InvariantCulture, $"[{X:G6}, {Y:G6}, {Z:G6}]");
}

/// <summary>
/// A posture: the unit "up" vector (the direction opposite gravity) in the body frame. Resting, the instrument feels
/// A = +1 g along it. Named axes "+x" ... "-z" or any non-zero vector, normalised.
/// </summary>
public readonly record struct Posture
{
    private Posture(Vector3D up) => Up = up;

    /// <summary>The unit up vector.</summary>
    public Vector3D Up { get; }

    /// <summary>The posture whose up vector is the named axis: "+x", "-x", "+y", "-y", "+z" or "-z".</summary>
    public static Posture FromAxis(string axis) => axis switch
    {
        "+x" => new(new Vector3D(1, 0, 0)),
        "-x" => new(new Vector3D(-1, 0, 0)),
        "+y" => new(new Vector3D(0, 1, 0)),
        "-y" => new(new Vector3D(0, -1, 0)),
        "+z" => new(new Vector3D(0, 0, 1)),
        "-z" => new(new Vector3D(0, 0, -1)),
        _ => throw new MetrologyException("up", $"Unknown axis '{axis}': use +x, -x, +y, -y, +z or -z."),
    };

    /// <summary>The posture whose up vector is <paramref name="v"/> normalised; a zero-length or non-finite vector is refused.</summary>
    public static Posture FromVector(Vector3D v)
    {
        double length = v.Length;
        if (!double.IsFinite(length) || length < 1e-12)
        {
            throw new MetrologyException("up", "An up vector needs finite components and a length above zero.");
        }

        return new(1 / length * v);
    }

    /// <summary>The angle to another posture in degrees.</summary>
    public double AngleDegrees(Posture other) => Math.Acos(Math.Clamp(Up.Dot(other.Up), -1, 1)) * 180 / Math.PI;
}
