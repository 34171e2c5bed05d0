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
# Invented echinoids whose age ranges cross stage boundaries and whose depth
# ranges partly straddle 200 m, so resampling draws give a band of width.
sqlite3 "$DB" "
WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < 30)
INSERT INTO occurrences(batch_id, line, scientific_name, genus, taxon_group, age_from, age_to, older_ma, younger_ma, age_status, timescale,
  min_depth_m, max_depth_m, articulation, reference_key, locality_id)
SELECT 1, 400 + i, 'Cus dus', 'Cus', 'echinoids', 'Santonian', 'Campanian', 85.7, 72.2, 'range', 'ics-2024-12',
  CASE WHEN i <= 12 THEN 100 ELSE 20 END, CASE WHEN i <= 12 THEN 400 ELSE 80 END, '', 'Ref7', 1 FROM c
UNION ALL
SELECT 1, 500 + i, 'Cus dus', 'Cus', 'echinoids', 'Campanian', 'Maastrichtian', 83.6, 66.0, 'range', 'ics-2024-12',
  CASE WHEN i <= 18 THEN 150 ELSE 250 END, CASE WHEN i <= 18 THEN 300 ELSE 600 END, '', 'Ref8', 2 FROM c
UNION ALL
SELECT 1, 600 + i, 'Cus dus', 'Cus', 'echinoids', 'Maastrichtian', 'Danian', 72.2, 61.66, 'range', 'ics-2024-12',
  CASE WHEN i <= 10 THEN 300 ELSE 40 END, CASE WHEN i <= 10 THEN 700 ELSE 90 END, '', 'Ref9', 3 FROM c;
" || { fail plot_setup "sqlite3 failed (echinoids)"; exit 0; }

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
# A plain PNG decoder (ISO/IEC 15948), shared by the checks below.
cat >"$T/pngread.py" <<'EOF'
import struct, zlib

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
EOF
if $PY - "$T" "$campanian" "$cretaceous" "$jurassic" >"$T/py" 2>&1 <<'EOF'
import re, sys
d, inview, out = sys.argv[1], sys.argv[2:4], sys.argv[4]
sys.path.insert(0, d)
rgb = lambda h: tuple(int(h[i:i + 2], 16) for i in (1, 3, 5))

def svg_colour(h):
    # cairo's SVG surface: rgb(R%,G%,B%) with each channel * 100 / 255
    return "rgb(%s)" % ",".join(("%.6f" % (c * 100 / 255)).rstrip("0").rstrip(".") + "%" for c in rgb(h))

svg = open(d + "/f.svg").read()
for h in inview:
    assert svg_colour(h) in svg, ("svg lacks", h, svg_colour(h))
assert svg_colour(out) not in svg, ("svg has out-of-view colour", out)

from pngread import png_pixels

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

# Resampling draws: the uncertainty options of shift, parsed by the same
# table (shift_options.c). The band is drawn in the tint of Okabe-Ito orange
# (0xE69F00 at 40 % over white = 0xF5D999, see plot.c) with the median dashed.
expect_status 0 plot_help_draws $BC plot --help
contains plot_help_lists_draws "$T/out" "--draws N            N resampling draws"
contains plot_help_lists_bootstrap "$T/out" "--bootstrap          each draw also resamples"
expect_status 2 plot_bias_refused $BC plot "$DB" -o "$T/w.svg" --quota 5
same_text plot_bias_refused_message "$T/err" "bathychron: plot: --quota: the figure does not draw it; see 'bathychron shift --quota'
(see 'bathychron plot --help')"
expect_status 2 plot_bad_draws $BC plot "$DB" -o "$T/w.svg" --draws 0
same_text plot_bad_draws_message "$T/err" "bathychron: plot: --draws: '0' is not a number of draws from 1 to 1000000
(see 'bathychron plot --help')"
expect_status 2 plot_bootstrap_needs_draws $BC plot "$DB" -o "$T/w.svg" --bootstrap
expect_status 0 plot_band_svg $BC plot "$DB" --group echinoids --draws 400 --seed 3 --threads 1 -o "$T/band.svg"
expect_status 0 plot_band_svg_again $BC plot "$DB" --group echinoids --draws 400 --seed 3 --threads 3 -o "$T/band2.svg"
expect_status 0 plot_band_other_seed $BC plot "$DB" --group echinoids --draws 400 --seed 4 -o "$T/band4.svg"
expect_status 0 plot_band_png $BC plot "$DB" --group echinoids --draws 400 --seed 3 -o "$T/band.png"
expect_status 0 plot_band_pdf $BC plot "$DB" --group echinoids --draws 400 --seed 3 -o "$T/band.pdf"
expect_status 0 plot_band_bootstrap $BC plot "$DB" --group echinoids --draws 300 --bootstrap --resample none -o "$T/boot.pdf"
expect_status 0 plot_no_band_svg $BC plot "$DB" --group echinoids -o "$T/noband.svg"
if cmp -s "$T/band.svg" "$T/band2.svg"; then ok plot_band_same_seed_identical_svg
else fail plot_band_same_seed_identical_svg "the same seed (1 and 3 threads) gave different SVG files"; fi
if cmp -s "$T/band.svg" "$T/band4.svg"; then fail plot_band_seed_matters "seeds 3 and 4 gave the same SVG"
else ok plot_band_seed_matters; fi
if $PY - "$T" >"$T/py" 2>&1 <<'EOF'
import sys
d = sys.argv[1]
sys.path.insert(0, d)
from pngread import png_pixels
band = "rgb(96.078431%,85.098039%,60%)"   # 0xF5D999 as cairo writes it in SVG
median = "rgb(83.529412%,36.862745%,0%)"  # Okabe-Ito vermillion 0xD55E00
svg = open(d + "/band.svg").read()
assert svg.count(band) >= 2, "band fill (figure and legend) missing from the SVG"
assert median in svg, "dashed median missing from the SVG"
assert band not in open(d + "/noband.svg").read(), "band colour without --draws"
(w, h), px = png_pixels(d + "/band.png")
assert bytes((0xF5, 0xD9, 0x99)) in px, "band colour not among the PNG's pixels"
EOF
then ok plot_band_colour_drawn; else fail plot_band_colour_drawn "$(tail -c 400 "$T/py")"; fi
# The band's numbers are the table's: shift with the same options.
$BC shift "$DB" --group echinoids --draws 400 --seed 3 >"$T/band.csv" 2>&1
contains plot_band_from_table "$T/band.csv" "Campanian,83.6,72.2,60,18,12,30,0.4,"
pdftotext "$T/band.pdf" - 2>/dev/null | tr '\n' ' ' | tr -s ' ' >"$T/btext"
contains plot_band_caption_draws "$T/btext" "quantiles of the deep share over 400 resampling draws (seed 3)"
contains plot_band_caption_what "$T/btext" "each age was drawn uniformly within its age range and each depth range crossing 200 m"
contains plot_band_caption_no_sampling "$T/btext" "The band shows age and depth uncertainty only, not sampling error."
contains plot_band_legend "$T/btext" "Resampling 2.5-97.5 % (dashed: median)"
pdftotext "$T/boot.pdf" - 2>/dev/null | tr '\n' ' ' | tr -s ' ' >"$T/btext2"
contains plot_band_caption_bootstrap "$T/btext2" "in which the occurrences were resampled with replacement (bootstrap)"
if grep -q "not sampling error" "$T/btext2"; then fail plot_band_bootstrap_no_disclaimer "bootstrap caption says no sampling error"
else ok plot_band_bootstrap_no_disclaimer; fi
