#!/bin/sh
# test_plot.sh - bathychron plot end to end: each figure format from a small
# invented database, read back by independent programs (poppler's pdfinfo and
# pdftoppm, librsvg's rsvg-convert, a plain PNG decoder in Python), the
# timescale bar in the chart's own colours, and the usage errors.
. "$(dirname "$0")/setup.sh"

PY=/usr/bin/python3
DB="$T/p.gpkg"
$BC init "$DB" >/dev/null 2>&1 || { fail plot_setup "init failed"; exit 0; }
# Invented occurrences, Santonian to Danian (stage bounds of ICS 2024-12).
sqlite3 "$DB" "
INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 'invented.csv', 'x', 'test');
INSERT INTO localities(fid, name, longitude, latitude) VALUES (1, 'Quarry A', 5, 45), (2, 'Cliff B', 100, -10), (3, 'Borehole C', -30, 20);
WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < 40)
INSERT INTO occurrences(batch_id, line, scientific_name, genus, taxon_group, age_from, age_to, older_ma, younger_ma, age_status, timescale,
  min_depth_m, max_depth_m, articulation, reference_key, locality_id)
SELECT 1, i, 'Aus bus', 'Aus', 'crinoids', 'Santonian', 'Santonian', 85.7, 83.6, 'exact', 'ics-2024-12',
  CASE WHEN i <= 6 THEN 300 ELSE 20 END, CASE WHEN i <= 6 THEN 500 ELSE 80 END, 'articulated', 'Ref' || (i % 3), 1 + i % 3 FROM c WHERE i <= 30
UNION ALL
SELECT 1, 100 + i, 'Aus bus', 'Aus', 'crinoids', 'Campanian', 'Campanian', 83.6, 72.2, 'exact', 'ics-2024-12',
  CASE WHEN i <= 15 THEN 250 ELSE 30 END, CASE WHEN i <= 15 THEN 600 ELSE 120 END, 'disarticulated', 'Ref' || (i % 4), 1 + i % 2 FROM c
UNION ALL
SELECT 1, 200 + i, 'Bus cus', 'Bus', 'crinoids', 'Maastrichtian', 'Maastrichtian', 72.2, 66.0, 'exact', 'ics-2024-12',
  CASE WHEN i <= 14 THEN 400 ELSE 50 END, CASE WHEN i <= 14 THEN 900 ELSE 150 END, '', 'Ref5', 3 FROM c WHERE i <= 20
UNION ALL
SELECT 1, 300 + i, 'Bus cus', 'Bus', 'crinoids', 'Danian', 'Danian', 66.0, 61.66, 'exact', 'ics-2024-12',
  CASE WHEN i <= 5 THEN 300 ELSE 100 END, CASE WHEN i <= 5 THEN 800 ELSE 180 END, '', 'Ref6', 2 FROM c WHERE i <= 8;
" || { fail plot_setup "sqlite3 failed"; exit 0; }

expect_status 0 plot_help $BC plot --help
contains plot_help_text "$T/out" "usage: bathychron plot DB"
contains plot_help_shares_shift_selection "$T/out" "--preservation C     articulation class"

# Usage errors: exact messages, exit 2, nothing written.
expect_status 2 plot_bad_extension $BC plot "$DB" -o "$T/fig.jpg"
same_text plot_bad_extension_message "$T/err" "bathychron: plot: $T/fig.jpg: output file: unknown figure format '.jpg'; name it .svg, .pdf or .png
(see 'bathychron plot --help')"
if [ -e "$T/fig.jpg" ]; then fail plot_bad_extension_writes_nothing "fig.jpg exists"; else ok plot_bad_extension_writes_nothing; fi
expect_status 2 plot_no_extension $BC plot "$DB" -o "$T/fig"
same_text plot_no_extension_message "$T/err" "bathychron: plot: $T/fig: output file: unknown figure format (no extension); name it .svg, .pdf or .png
(see 'bathychron plot --help')"
expect_status 2 plot_needs_output $BC plot "$DB"
same_text plot_needs_output_message "$T/err" "bathychron: plot: expected -o FILE.svg, FILE.pdf or FILE.png
(see 'bathychron plot --help')"
expect_status 2 plot_bad_width $BC plot "$DB" -o "$T/w.svg" --width 20
expect_status 2 plot_bad_span $BC plot "$DB" -o "$T/w.svg" --span most
same_text plot_bad_span_message "$T/err" "bathychron: plot: --span: 'most' is not majority, all, split or max:MYR
(see 'bathychron plot --help')"
expect_status 2 plot_split_and_zones $BC plot "$DB" -o "$T/w.svg" --split 200 --zones 200,1000
expect_status 2 plot_unknown_option $BC plot "$DB" -o "$T/w.svg" --colour red
expect_status 3 plot_missing_db $BC plot "$T/none.gpkg" -o "$T/w.svg"
expect_status 1 plot_empty_selection $BC plot "$DB" --group sponges -o "$T/w.svg"
same_text plot_empty_selection_message "$T/err" "bathychron: $DB: no occurrences match the selection (group sponges)"

# Each format.
expect_status 0 plot_svg $BC plot "$DB" --group crinoids -o "$T/f.svg"
expect_status 0 plot_pdf $BC plot "$DB" --group crinoids -o "$T/f.pdf" --title "Invented crinoids"
expect_status 0 plot_png $BC plot "$DB" --group crinoids -o "$T/f.png"
expect_status 0 plot_pdf_wide $BC plot "$DB" --group crinoids --bins 5 --older-right --width 180 -o "$T/wide.pdf"

# PDF: poppler reads it; one page; 85 mm = 240.945 pt and 180 mm =
# 510.236 pt (1 pt = 1/72 in, ISO 32000-1 8.3.2.3); the title is in the
# document information.
for pair in f:240.945 wide:510.236; do
	f=${pair%%:*}
	pt=${pair#*:}
	if info=$(pdfinfo "$T/$f.pdf" 2>&1); then
		got=$(printf '%s\n' "$info" | sed -n 's/^Page size: *\([0-9.]*\) x .*/\1/p')
		if [ "$got" = "$pt" ]; then ok "plot_pdf_${f}_width"; else fail "plot_pdf_${f}_width" "pdfinfo: '$got' pt, expected $pt"; fi
		pages=$(printf '%s\n' "$info" | sed -n 's/^Pages: *//p')
		if [ "$pages" = 1 ]; then ok "plot_pdf_${f}_one_page"; else fail "plot_pdf_${f}_one_page" "pages: $pages"; fi
	else
		fail "plot_pdf_${f}_valid" "$(printf '%s' "$info" | head -c 300)"
	fi
done
pdfinfo "$T/f.pdf" >"$T/info" 2>&1
contains plot_pdf_title "$T/info" "Invented crinoids"

# SVG: librsvg parses and renders it.
if rsvg-convert "$T/f.svg" -o "$T/svg.png" 2>"$T/rsvg.err" && [ -s "$T/svg.png" ]; then ok plot_svg_renders
else fail plot_svg_renders "$(head -c 300 "$T/rsvg.err")"; fi

# The timescale bar uses the chart's colours: the ICS 2024-12 colours of
# Campanian and Cretaceous (in view), as `bathychron timescale list` gives
# them, appear in the SVG (cairo writes rgb(R%,G%,B%)) and as exact pixels
# in the PNG and in poppler's rendering of the PDF; the Jurassic colour
# (out of view) does not appear.
$BC timescale list "$DB" --name ics-2024-12 >"$T/chart.tsv" 2>&1
colour() { awk -F'\t' -v n="$1" '$1 == n { print $5 }' "$T/chart.tsv"; }
campanian=$(colour Campanian)
cretaceous=$(colour Cretaceous)
jurassic=$(colour Jurassic)
if [ -n "$campanian" ] && [ -n "$cretaceous" ] && [ -n "$jurassic" ]; then ok plot_chart_colours_listed
else fail plot_chart_colours_listed "Campanian '$campanian' Cretaceous '$cretaceous' Jurassic '$jurassic'"; fi
pdftoppm -r 100 -singlefile "$T/f.pdf" "$T/pdf" 2>/dev/null || fail plot_pdf_render "pdftoppm failed"
if $PY - "$T" "$campanian" "$cretaceous" "$jurassic" >"$T/py" 2>&1 <<'EOF'
import re, struct, sys, zlib
d, inview, out = sys.argv[1], sys.argv[2:4], sys.argv[4]
rgb = lambda h: tuple(int(h[i:i + 2], 16) for i in (1, 3, 5))

def svg_colour(h):
    # cairo's SVG surface: rgb(R%,G%,B%) with each channel * 100 / 255
    return "rgb(%s)" % ",".join(("%.6f" % (c * 100 / 255)).rstrip("0").rstrip(".") + "%" for c in rgb(h))

svg = open(d + "/f.svg").read()
for h in inview:
    assert svg_colour(h) in svg, ("svg lacks", h, svg_colour(h))
assert svg_colour(out) not in svg, ("svg has out-of-view colour", out)

def png_pixels(path):
    # PNG (ISO/IEC 15948): signature, IHDR, IDAT zlib stream, per-row filters
    data = open(path, "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n", "PNG signature"
    pos, idat, ihdr = 8, b"", None
    while pos < len(data):
        n, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            ihdr = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    w, h, depth, ctype = ihdr[:4]
    assert depth == 8 and ctype in (2, 6), ihdr
    bpp = 3 if ctype == 2 else 4
    raw, stride, prev, px = zlib.decompress(idat), w * bpp, bytearray(w * bpp), set()
    for y in range(h):
        f, row = raw[y * (stride + 1)], bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = row[i - bpp] if i >= bpp else 0
            b, c = prev[i], prev[i - bpp] if i >= bpp else 0
            if f == 1: row[i] = (row[i] + a) & 255
            elif f == 2: row[i] = (row[i] + b) & 255
            elif f == 3: row[i] = (row[i] + (a + b) // 2) & 255
            elif f == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                row[i] = (row[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        px.update(bytes(row[i:i + 3]) for i in range(0, stride, bpp))
        prev = row
    return (w, h), px

(w, h), px = png_pixels(d + "/f.png")
# 85 mm at 300 dpi: 85 / 25.4 * 300 = 1003.9 -> 1004 pixels
assert w == 1004 and h > 800, (w, h)
for hx in inview:
    assert bytes(rgb(hx)) in px, ("png lacks", hx)
assert bytes(rgb(out)) not in px, ("png has out-of-view colour", out)

ppm = open(d + "/pdf.ppm", "rb").read()
m = re.match(rb"P6\s+(\d+)\s+(\d+)\s+255\s", ppm)
body = ppm[m.end():]
cols = {body[i:i + 3] for i in range(0, len(body), 3)}
for hx in inview:
    assert bytes(rgb(hx)) in cols, ("pdf rendering lacks", hx)
assert bytes(rgb(out)) not in cols, ("pdf rendering has out-of-view colour", out)
EOF
then ok plot_timescale_bar_chart_colours; else fail plot_timescale_bar_chart_colours "$(tail -c 400 "$T/py")"; fi

# The default caption names the selection, binning, zoning and chart; a
# given caption replaces it; the caution is always there.
pdftotext "$T/f.pdf" - 2>/dev/null | tr '\n' ' ' | tr -s ' ' >"$T/text"
contains plot_caption_selection "$T/text" "selection: group crinoids"
contains plot_caption_binning "$T/text" "bins: stages of chart ics-2024-12"
contains plot_caption_zoning "$T/text" "shallow above 200 m, deep at or below 200 m"
contains plot_caption_counts "$T/text" "98 of 98 selected occurrences counted"
contains plot_caption_caution "$T/text" "Palaeodepths are interpretations"
expect_status 0 plot_own_caption $BC plot "$DB" -o "$T/c.pdf" --caption "Figure 2. Invented data."
pdftotext "$T/c.pdf" - 2>/dev/null | tr '\n' ' ' >"$T/text2"
contains plot_own_caption_text "$T/text2" "Figure 2. Invented data."
if grep -q "selection:" "$T/text2"; then fail plot_own_caption_replaces "default caption still present"; else ok plot_own_caption_replaces; fi
