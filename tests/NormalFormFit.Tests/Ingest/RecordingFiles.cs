using System.Globalization;
using System.Text;

namespace NormalFormFit.Tests.Ingest;

/// <summary>A temporary folder of run files and a manifest, deleted on dispose.</summary>
internal sealed class RecordingFiles : IDisposable
{
    private readonly List<(string File, double Param)> _entries = [];

    public RecordingFiles()
    {
        Folder = Path.Combine(Path.GetTempPath(), "nffit-tests-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(Folder);
    }

    public string Folder { get; }

    public string ManifestPath => Path.Combine(Folder, "manifest.csv");

    /// <summary>Writes columns as CSV with the given header (invariant culture, shortest round-trip numbers).</summary>
    public string AddRun(string file, double param, string header, params double[][] columns)
    {
        var sb = new StringBuilder(header).Append('\n');
        for (var i = 0; i < columns[0].Length; i++)
        {
            for (var c = 0; c < columns.Length; c++)
            {
                sb.Append(c == 0 ? string.Empty : ",").Append(columns[c][i].ToString("R", CultureInfo.InvariantCulture));
            }

            sb.Append('\n');
        }

        File.WriteAllText(Path.Combine(Folder, file), sb.ToString());
        _entries.Add((file, param));
        return file;
    }

    /// <summary>Writes raw bytes as a file (not added to the manifest).</summary>
    public string WriteBytes(string file, byte[] bytes)
    {
        var path = Path.Combine(Folder, file);
        File.WriteAllBytes(path, bytes);
        return path;
    }

    public string WriteManifest()
    {
        var sb = new StringBuilder("file,param\n");
        foreach (var (file, param) in _entries)
        {
            sb.Append(file).Append(',').Append(param.ToString("R", CultureInfo.InvariantCulture)).Append('\n');
        }

        File.WriteAllText(ManifestPath, sb.ToString());
        return ManifestPath;
    }

    public void Dispose()
    {
        try
        {
            Directory.Delete(Folder, recursive: true);
        }
        catch (IOException)
        {
        }
    }
}
