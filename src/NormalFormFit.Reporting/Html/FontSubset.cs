using System.Runtime.InteropServices;

namespace NormalFormFit.Reporting.Html;

/// <summary>
/// Cuts a TrueType font down to the glyphs a page uses, with HarfBuzz's subsetter (<c>hb_subset_or_fail</c>, harfbuzz
/// 8.3.1 as built into HarfBuzzSharp's native library, which the plotting library already ships on Windows, macOS and
/// Linux). Kept: the glyphs of the given characters and every glyph the font's layout features can reach from them
/// (glyph closure over GSUB and composite glyphs), all layout features, the hinting, the metrics and the licence
/// notice, so that the characters render exactly as with the whole font. Cost: milliseconds for a few hundred
/// characters.
/// </summary>
internal static partial class FontSubset
{
    private const string Lib = "libHarfBuzzSharp";

    // hb_memory_mode_t HB_MEMORY_MODE_DUPLICATE: HarfBuzz copies the bytes at once.
    private const int DuplicateMemory = 0;

    // hb_subset_sets_t HB_SUBSET_SETS_NAME_ID and HB_SUBSET_SETS_LAYOUT_FEATURE_TAG.
    private const int NameIds = 4;
    private const int LayoutFeatureTags = 6;

    // OpenType name IDs 13 and 14, the licence text and its address: the font's licence asks that its permission
    // notice go with every copy. HarfBuzz keeps IDs 0–6 (copyright, names, version) by default.
    private static readonly uint[] LicenceNames = [13, 14];

    /// <summary>
    /// The subset of <paramref name="font"/> for <paramref name="codePoints"/>; null when the native subsetter cannot
    /// be loaded or fails (the caller then embeds the whole font).
    /// </summary>
    public static byte[]? Subset(byte[] font, IEnumerable<int> codePoints)
    {
        ArgumentNullException.ThrowIfNull(font);
        ArgumentNullException.ThrowIfNull(codePoints);
        try
        {
            return Run(font, codePoints);
        }
        catch (Exception e) when (e is DllNotFoundException or EntryPointNotFoundException or BadImageFormatException)
        {
            return null;
        }
    }

    private static byte[]? Run(byte[] font, IEnumerable<int> codePoints)
    {
        IntPtr blob, face = IntPtr.Zero, input = IntPtr.Zero, subset = IntPtr.Zero, result = IntPtr.Zero;
        var pin = GCHandle.Alloc(font, GCHandleType.Pinned);
        try
        {
            blob = hb_blob_create(pin.AddrOfPinnedObject(), (uint)font.Length, DuplicateMemory, IntPtr.Zero, IntPtr.Zero);
        }
        finally
        {
            pin.Free();
        }

        try
        {
            face = hb_face_create(blob, 0);
            input = hb_subset_input_create_or_fail();
            if (input == IntPtr.Zero)
            {
                return null;
            }

            var unicodes = hb_subset_input_unicode_set(input);
            foreach (var c in codePoints)
            {
                hb_set_add(unicodes, (uint)c);
            }

            var names = hb_subset_input_set(input, NameIds);
            foreach (var id in LicenceNames)
            {
                hb_set_add(names, id);
            }

            // Every layout feature, not only HarfBuzz's default list: the page must shape as with the whole font.
            var features = hb_subset_input_set(input, LayoutFeatureTags);
            hb_set_clear(features);
            hb_set_invert(features);

            subset = hb_subset_or_fail(face, input);
            if (subset == IntPtr.Zero)
            {
                return null;
            }

            result = hb_face_reference_blob(subset);
            var length = (int)hb_blob_get_length(result);
            var data = hb_blob_get_data(result, IntPtr.Zero);
            if (length == 0 || data == IntPtr.Zero)
            {
                return null;
            }

            var bytes = new byte[length];
            Marshal.Copy(data, bytes, 0, length);
            return bytes;
        }
        finally
        {
            hb_blob_destroy(result);
            hb_face_destroy(subset);
            hb_subset_input_destroy(input);
            hb_face_destroy(face);
            hb_blob_destroy(blob);
        }
    }

    // The destroy functions accept null (HarfBuzz's convention), so the finally block needs no checks.
    [LibraryImport(Lib)]
    private static partial IntPtr hb_blob_create(IntPtr data, uint length, int mode, IntPtr userData, IntPtr destroy);

    [LibraryImport(Lib)]
    private static partial void hb_blob_destroy(IntPtr blob);

    [LibraryImport(Lib)]
    private static partial uint hb_blob_get_length(IntPtr blob);

    [LibraryImport(Lib)]
    private static partial IntPtr hb_blob_get_data(IntPtr blob, IntPtr length);

    [LibraryImport(Lib)]
    private static partial IntPtr hb_face_create(IntPtr blob, uint index);

    [LibraryImport(Lib)]
    private static partial void hb_face_destroy(IntPtr face);

    [LibraryImport(Lib)]
    private static partial IntPtr hb_face_reference_blob(IntPtr face);

    [LibraryImport(Lib)]
    private static partial IntPtr hb_subset_input_create_or_fail();

    [LibraryImport(Lib)]
    private static partial void hb_subset_input_destroy(IntPtr input);

    [LibraryImport(Lib)]
    private static partial IntPtr hb_subset_input_unicode_set(IntPtr input);

    [LibraryImport(Lib)]
    private static partial IntPtr hb_subset_input_set(IntPtr input, int setType);

    [LibraryImport(Lib)]
    private static partial IntPtr hb_subset_or_fail(IntPtr face, IntPtr input);

    [LibraryImport(Lib)]
    private static partial void hb_set_add(IntPtr set, uint codepoint);

    [LibraryImport(Lib)]
    private static partial void hb_set_clear(IntPtr set);


    [LibraryImport(Lib)]
    private static partial void hb_set_invert(IntPtr set);
}
