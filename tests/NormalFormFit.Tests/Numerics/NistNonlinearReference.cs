namespace NormalFormFit.Tests.Numerics;

/// <summary>
/// A nonlinear regression problem of the NIST Statistical Reference Datasets (StRD, Nonlinear Regression;
/// https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml): data, model with its derivatives, the two starting points
/// NIST gives and the certified values (11 significant digits as NIST prints them).
/// </summary>
/// <param name="Name">Dataset name as NIST gives it, with its page title and level of difficulty.</param>
/// <param name="X">Predictor values x.</param>
/// <param name="Y">Responses y.</param>
/// <param name="Model">f(x; b).</param>
/// <param name="Gradient">∂f/∂b_u at (x; b), written into the third argument.</param>
/// <param name="Start1">NIST's first starting point ("Start 1", far from the solution).</param>
/// <param name="Start2">NIST's second starting point ("Start 2", nearer).</param>
/// <param name="Certified">Certified parameter estimates.</param>
/// <param name="CertifiedSe">Certified standard deviations of the estimates.</param>
/// <param name="CertifiedRss">Certified residual sum of squares.</param>
public sealed record NistProblem(
    string Name, double[] X, double[] Y, Func<double, double[], double> Model, Action<double, double[], double[]> Gradient,
    double[] Start1, double[] Start2, double[] Certified, double[] CertifiedSe, double CertifiedRss)
{
    public override string ToString() => Name;
}

/// <summary>
/// The datasets, typed in from the NIST StRD pages. That they are typed right is itself checked: the certified
/// estimates must give the certified residual sum of squares on these data to about ten digits
/// (LevenbergMarquardtTests.CertifiedEstimates_OnTheTypedData_GiveTheCertifiedResidualSumOfSquares).
/// </summary>
public static class NistNonlinearReference
{
    /// <summary>
    /// Misra1a — NIST StRD page "Misra1a", level of difficulty: lower (a NIST dental research study of monomolecular
    /// adsorption; description from memory). y = b1·(1 − exp(−b2·x)); 14 observations, 2 parameters.
    /// </summary>
    public static NistProblem Misra1a { get; } = new(
        "Misra1a (NIST StRD, lower difficulty)",
        X: [77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0],
        Y: [10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78],
        Model: (x, b) => b[0] * (1.0 - Math.Exp(-b[1] * x)),
        Gradient: (x, b, g) =>
        {
            var e = Math.Exp(-b[1] * x);
            g[0] = 1.0 - e;
            g[1] = b[0] * x * e;
        },
        Start1: [500, 1e-4],
        Start2: [250, 5e-4],
        Certified: [2.3894212918E+02, 5.5015643181E-04],
        CertifiedSe: [2.7070075241E+00, 7.2668688436E-06],
        CertifiedRss: 1.2455138894E-01);

    /// <summary>
    /// Thurber — NIST StRD page "Thurber", level of difficulty: higher (a NIST study of semiconductor electron mobility;
    /// description from memory). y = (b1 + b2·x + b3·x² + b4·x³)/(1 + b5·x + b6·x² + b7·x³); 37 observations, 7 parameters.
    /// </summary>
    public static NistProblem Thurber { get; } = new(
        "Thurber (NIST StRD, higher difficulty)",
        X:
        [
            -3.067, -2.981, -2.921, -2.912, -2.840, -2.797, -2.702, -2.699, -2.633, -2.481, -2.363, -2.322, -1.501,
            -1.460, -1.274, -1.212, -1.100, -1.046, -0.915, -0.714, -0.566, -0.545, -0.400, -0.309, -0.109, -0.103,
            0.010, 0.119, 0.377, 0.790, 0.963, 1.006, 1.115, 1.572, 1.841, 2.047, 2.200,
        ],
        Y:
        [
            80.574, 84.248, 87.264, 87.195, 89.076, 89.608, 89.868, 90.101, 92.405, 95.854, 100.696, 101.060, 401.672,
            390.724, 567.534, 635.316, 733.054, 759.087, 894.206, 990.785, 1090.109, 1080.914, 1122.643, 1178.351,
            1260.531, 1273.514, 1288.339, 1327.543, 1353.863, 1414.509, 1425.208, 1421.384, 1442.962, 1464.350,
            1468.705, 1447.894, 1457.628,
        ],
        Model: (x, b) =>
            (b[0] + (b[1] * x) + (b[2] * x * x) + (b[3] * x * x * x)) / (1.0 + (b[4] * x) + (b[5] * x * x) + (b[6] * x * x * x)),
        Gradient: (x, b, g) =>
        {
            var p = b[0] + (b[1] * x) + (b[2] * x * x) + (b[3] * x * x * x);
            var q = 1.0 + (b[4] * x) + (b[5] * x * x) + (b[6] * x * x * x);
            g[0] = 1.0 / q;
            g[1] = x / q;
            g[2] = x * x / q;
            g[3] = x * x * x / q;
            g[4] = -p * x / (q * q);
            g[5] = -p * x * x / (q * q);
            g[6] = -p * x * x * x / (q * q);
        },
        Start1: [1000, 1000, 400, 40, 0.7, 0.3, 0.03],
        Start2: [1300, 1500, 500, 75, 1, 0.4, 0.05],
        Certified: [1.2881396800E+03, 1.4910792535E+03, 5.8323836877E+02, 7.5416644291E+01, 9.6629502864E-01, 3.9797285797E-01, 4.9727297349E-02],
        CertifiedSe: [4.6647963344E+00, 3.9571156086E+01, 2.8698696102E+01, 5.5675370270E+00, 3.1333340687E-02, 1.4984928198E-02, 6.5842344623E-03],
        CertifiedRss: 5.6427082397E+03);

    /// <summary>
    /// MGH09 — NIST StRD page "MGH09", level of difficulty: higher (Kowalik &amp; Osborne's enzyme data, problem 9 of
    /// Moré, Garbow &amp; Hillstrom 1981; description from memory). y = b1·(x² + x·b2)/(x² + x·b3 + b4); 11 observations,
    /// 4 parameters.
    /// </summary>
    public static NistProblem Mgh09 { get; } = new(
        "MGH09 (NIST StRD, higher difficulty)",
        X: [4.0, 2.0, 1.0, 0.5, 0.25, 0.167, 0.125, 0.1, 0.0833, 0.0714, 0.0625],
        Y: [0.1957, 0.1947, 0.1735, 0.1600, 0.0844, 0.0627, 0.0456, 0.0342, 0.0323, 0.0235, 0.0246],
        Model: (x, b) => b[0] * ((x * x) + (x * b[1])) / ((x * x) + (x * b[2]) + b[3]),
        Gradient: (x, b, g) =>
        {
            var n = (x * x) + (x * b[1]);
            var d = (x * x) + (x * b[2]) + b[3];
            g[0] = n / d;
            g[1] = b[0] * x / d;
            g[2] = -b[0] * n * x / (d * d);
            g[3] = -b[0] * n / (d * d);
        },
        Start1: [25, 39, 41.5, 39],
        Start2: [0.25, 0.39, 0.415, 0.39],
        Certified: [1.9280693458E-01, 1.9128232873E-01, 1.2305650693E-01, 1.3606233068E-01],
        CertifiedSe: [1.1435312227E-02, 1.9633220911E-01, 8.0842031232E-02, 9.0025542308E-02],
        CertifiedRss: 3.0750560385E-04);
}
