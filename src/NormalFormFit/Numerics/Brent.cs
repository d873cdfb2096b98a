namespace NormalFormFit.Numerics;

/// <summary>
/// Brent's minimiser without derivatives (golden section with parabolic steps; Brent 1973,
/// "Algorithms for Minimization without Derivatives", ch. 5).
/// </summary>
/// <remarks>
/// Finds a local minimum of f on [a, b]; superlinear near a smooth minimum, never slower than golden section
/// (about 1.44 log₂((b − a)/tolerance) evaluations at worst), at most 200 evaluations. Needs one interior point
/// whose value is below the ends' (a bracket); <see cref="GridSearch"/> provides one.
/// </remarks>
internal static class Brent
{
    private static readonly double GoldenSection = 0.5 * (3.0 - Math.Sqrt(5.0));

    /// <summary>
    /// Minimises f on [a, b] to absolute tolerance <paramref name="tolerance"/>, starting from a known
    /// interior point x with value fx (so that value is not computed again).
    /// </summary>
    public static double Minimize(Func<double, double> f, double a, double b, double x, double fx, double tolerance)
    {
        double w = x, v = x, fw = fx, fv = fx;
        double d = 0.0, e = 0.0;
        for (int iteration = 0; iteration < 200; iteration++)
        {
            double middle = 0.5 * (a + b);
            double tol1 = tolerance, tol2 = 2.0 * tol1;
            if (Math.Abs(x - middle) <= tol2 - (0.5 * (b - a)))
            {
                break;
            }

            bool golden = true;
            if (Math.Abs(e) > tol1)
            {
                double r = (x - w) * (fx - fv);
                double q = (x - v) * (fx - fw);
                double p = ((x - v) * q) - ((x - w) * r);
                q = 2.0 * (q - r);
                if (q > 0.0)
                {
                    p = -p;
                }

                q = Math.Abs(q);
                double eOld = e;
                e = d;
                if (Math.Abs(p) < Math.Abs(0.5 * q * eOld) && p > q * (a - x) && p < q * (b - x))
                {
                    d = p / q;
                    double u0 = x + d;
                    if (u0 - a < tol2 || b - u0 < tol2)
                    {
                        d = middle >= x ? tol1 : -tol1;
                    }

                    golden = false;
                }
            }

            if (golden)
            {
                e = x >= middle ? a - x : b - x;
                d = GoldenSection * e;
            }

            double u = Math.Abs(d) >= tol1 ? x + d : x + (d > 0 ? tol1 : -tol1);
            double fu = f(u);
            if (fu <= fx)
            {
                if (u >= x)
                {
                    a = x;
                }
                else
                {
                    b = x;
                }

                v = w;
                fv = fw;
                w = x;
                fw = fx;
                x = u;
                fx = fu;
            }
            else
            {
                if (u < x)
                {
                    a = u;
                }
                else
                {
                    b = u;
                }

                if (fu <= fw || w == x)
                {
                    v = w;
                    fv = fw;
                    w = u;
                    fw = fu;
                }
                else if (fu <= fv || v == x || v == w)
                {
                    v = u;
                    fv = fu;
                }
            }
        }

        return x;
    }
}
