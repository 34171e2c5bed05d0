#!/bin/sh
# test_plot_files.sh - the figure files bathychron writes, read back by
# independent programs: poppler (pdfinfo, pdffonts, pdftoppm) for PDF,
# librsvg (rsvg-convert) for SVG, and a plain PNG chunk reader.
# The figures come from the unit tests' hand-made data and chart
# (tests/unit/test_plot.c), kept with BC_PLOT_SAMPLES.
set -u
TOP=${BC_SOURCE_DIR:-$(cd "$(dirname "$0")/../.." && pwd)}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
ok() { echo "ok $1"; }
fail() { echo "FAIL $1: $2"; }

if ! BC_PLOT_SAMPLES="$T" "$TOP/build/unit-tests" plot_ >"$T/unit.log" 2>&1; then
	fail plot_samples "unit tests writing the samples failed: $(grep FAIL "$T/unit.log" | head -3)"
	exit 0
fi

# Page width: 1 pt = 1/72 in and 1 in = 25.4 mm (PostScript point, PDF 1.7
# ISO 32000-1 8.3.2.3 default user space unit), so 85 mm = 240.945 pt and
# 180 mm = 510.236 pt.
for pair in 85:240.945 180:510.236; do
	mm=${pair%%:*}
	pt=${pair#*:}
	f="$T/shift-${mm}mm.pdf"
	if info=$(pdfinfo "$f" 2>&1); then
		got=$(printf '%s\n' "$info" | sed -n 's/^Page size: *\([0-9.]*\) x .*/\1/p')
		if [ "$got" = "$pt" ]; then ok "pdf_${mm}mm_page_width"; else fail "pdf_${mm}mm_page_width" "pdfinfo says '$got' pt, expected $pt"; fi
		pages=$(printf '%s\n' "$info" | sed -n 's/^Pages: *//p')
		if [ "$pages" = 1 ]; then ok "pdf_${mm}mm_one_page"; else fail "pdf_${mm}mm_one_page" "pages: $pages"; fi
	else
		fail "pdf_${mm}mm_valid" "pdfinfo: $(printf '%s' "$info" | head -c 300)"
	fi
	# the text font is DejaVu Sans, embedded (journals require embedded fonts)
	if pdffonts "$f" 2>/dev/null | grep -q 'DejaVuSans .* yes'; then ok "pdf_${mm}mm_font_embedded"
	else fail "pdf_${mm}mm_font_embedded" "$(pdffonts "$f" 2>&1 | head -c 300)"; fi
done

# SVG: librsvg must parse and render it; at its default 96 px per inch the
# 85 mm wide figure is 85 / 25.4 * 96 = 321.3 px wide (rounded up).
for mm in 85 180; do
	f="$T/shift-${mm}mm.svg"
	if rsvg-convert "$f" -o "$T/svg-${mm}.png" 2>"$T/rsvg.err"; then
		ok "svg_${mm}mm_renders"
	else
		fail "svg_${mm}mm_renders" "$(head -c 300 "$T/rsvg.err")"
	fi
done

# Pixel checks on images made by other renderers: the timescale bar's chart
# colours (ICS 2024-12 colours of Cretaceous #7FC64E and Campanian #E6F47F)
# appear exactly in poppler's rendering of the PDF; the Jurassic colour
# (#34B2C9), out of view, does not. PNG headers: ISO/IEC 15948 (PNG), IHDR
# and pHYs (11.3.5.3: pixels per metre; 300 dpi = 11811).
pdftoppm -r 150 -singlefile "$T/shift-180mm.pdf" "$T/pdf180" 2>/dev/null || fail pdf_render "pdftoppm failed"
/usr/bin/python3 - "$T" <<'EOF'
import struct, sys, zlib
d = sys.argv[1]

def chunks(path):
    data = open(path, "rb").read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError("no PNG signature")
    i, out = 8, []
    while i < len(data):
        n, = struct.unpack(">I", data[i:i + 4])
        typ, body = data[i + 4:i + 8], data[i + 8:i + 8 + n]
        crc, = struct.unpack(">I", data[i + 8 + n:i + 12 + n])
        if zlib.crc32(typ + body) & 0xFFFFFFFF != crc:
            raise ValueError("bad CRC in chunk %r" % typ)
        out.append((typ, body))
        i += 12 + n
    return out

def check(name, cond, why):
    print(("ok %s" % name) if cond else ("FAIL %s: %s" % (name, why)))

for mm, px in ((85, 1004), (180, 2126)):  # ceil(mm / 25.4 * 300)
    try:
        cs = chunks("%s/shift-%dmm.png" % (d, mm))
        w, h = struct.unpack(">II", cs[0][1][:8])
        check("png_%dmm_width_300dpi" % mm, cs[0][0] == b"IHDR" and w == px, "IHDR width %d, expected %d" % (w, px))
        phys = [b for t, b in cs if t == b"pHYs"]
        check("png_%dmm_phys" % mm, phys and struct.unpack(">IIB", phys[0]) == (11811, 11811, 1), "pHYs %r" % phys)
        check("png_%dmm_ends" % mm, cs[-1][0] == b"IEND", "last chunk %r" % cs[-1][0])
    except Exception as e:
        print("FAIL png_%dmm_valid: %s" % (mm, e))
    try:
        cs = chunks("%s/svg-%d.png" % (d, mm))
        w, h = struct.unpack(">II", cs[0][1][:8])
        want = -(-mm * 96 // 25.4)
        check("svg_%dmm_size" % mm, abs(w - want) <= 1, "rsvg width %d px, expected %d" % (w, want))
    except Exception as e:
        print("FAIL svg_%dmm_size: %s" % (mm, e))

try:
    raw = open("%s/pdf180.ppm" % d, "rb").read()
    # binary PPM (P6): header "P6\nW H\n255\n" then RGB triples
    parts = raw.split(b"\n", 3)
    w, h = map(int, parts[1].split())
    pix = parts[3]
    def count(rgb):
        t = bytes.fromhex(rgb)
        return sum(1 for i in range(0, len(pix), 3) if pix[i:i + 3] == t)
    n_cre, n_cam, n_jur = count("7FC64E"), count("E6F47F"), count("34B2C9")
    check("pdf_chart_colour_cretaceous", n_cre > 100, "%d pixels of #7FC64E" % n_cre)
    check("pdf_chart_colour_campanian", n_cam > 100, "%d pixels of #E6F47F" % n_cam)
    check("pdf_no_out_of_view_colour", n_jur == 0, "%d pixels of #34B2C9" % n_jur)
except Exception as e:
    print("FAIL pdf_render_pixels: %s" % e)
EOF
