#!/usr/bin/python3
"""test_chart_bounds.py - the chart bounds bathychron holds, checked against
the ICS releases themselves, read here by an independent RDF/XML reader
(lxml; no code shared with src/skos.c).

Sources (all in $BC_SHARED_DIR/reference-data, see its README.md):
  ics-chart-2024-12.skos.rdf  ICS chart data release 2024-12, CC BY 4.0,
                              (c) International Commission on Stratigraphy
  ics-chart-2020.skos.rdf     CGI/IUGS gts2020 vocabulary (ICS chart 2020/01), CC0
  ics-chart-2017.skos.rdf     CGI/IUGS isc2017 vocabulary (ICS chart 2017/02), CC0

For every stage, series and system (ranks Age, Epoch, Period, Sub-Period)
of each release, the bounds and uncertainties stated in the file must equal
what `bathychron timescale list` prints for (a) the release loaded from its
RDF file, (b) the chart read back from a database, and (c) the built-in
chart (reference/charts/*.tsv, stored by `bathychron init`). Prints
"ok NAME" / "FAIL NAME: why".
"""
import csv
import io
import math
import os
import subprocess
import sys
import tempfile
from urllib.parse import urljoin

from lxml import etree

TOP = os.environ.get("BC_SOURCE_DIR") or os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
SHARED = os.environ.get("BC_SHARED_DIR") or os.path.join(TOP, "..", "shared")
REF = os.path.join(SHARED, "reference-data")
BC = os.environ.get("BC_PROGRAM") or os.path.join(TOP, "build", "bathychron")

RDF = "http://www.w3.org/1999/02/22-rdf-syntax-ns#"
XMLNS = "http://www.w3.org/XML/1998/namespace"
SKOS = "http://www.w3.org/2004/02/skos/core#"
TIME = "http://www.w3.org/2006/time#"
GTS = "http://resource.geosciml.org/ontology/timescale/gts#"
RANK = "http://resource.geosciml.org/ontology/timescale/rank/"
INMYA = "http://resource.geosciml.org/classifier/ics/ischart/inMYA"
TRS = "http://resource.geosciml.org/classifier/cgi/geologicage/"
OWL_DEPRECATED = "http://www.w3.org/2002/07/owl#deprecated"
RANKS = {"Super-Eon": "supereon", "Eon": "eon", "Era": "era", "Period": "period",
         "Sub-Period": "subperiod", "Epoch": "epoch", "Age": "age"}
CHECKED_RANKS = {"age", "epoch", "period", "subperiod"}  # stage, series, system (and subsystem)

failures = 0


def ok(name):
    print("ok " + name)


def fail(name, why):
    global failures
    failures += 1
    print("FAIL %s: %s" % (name, why))


# ---- a small RDF/XML reader: node elements, property elements, nesting ----
def qname(tag):
    return tag[1:].replace("}", "") if tag.startswith("{") else tag


class Graph:
    def __init__(self, path):
        parser = etree.XMLParser(resolve_entities=False, no_network=True, load_dtd=False, huge_tree=False)
        root = etree.parse(path, parser).getroot()
        self.p = {}
        self.order = []
        self.blank = 0
        base = root.get("{%s}base" % XMLNS) or ""
        for el in root:
            if isinstance(el.tag, str):
                self.node(el, base)

    def add(self, s, p, o):
        if s not in self.p:
            self.p[s] = {}
            self.order.append(s)
        self.p[s].setdefault(p, []).append(o)

    def new_blank(self):
        self.blank += 1
        return "_:b%d" % self.blank

    def res(self, base, ref):
        return urljoin(base, ref) if base else ref

    def node(self, el, base):
        b = el.get("{%s}base" % XMLNS)
        base = self.res(base, b) if b else base
        if el.get("{%s}about" % RDF) is not None:
            s = self.res(base, el.get("{%s}about" % RDF))
        elif el.get("{%s}nodeID" % RDF) is not None:
            s = "_:n" + el.get("{%s}nodeID" % RDF)
        else:
            s = self.new_blank()
        if qname(el.tag) != RDF + "Description":
            self.add(s, RDF + "type", ("iri", qname(el.tag)))
        for pe in el:
            if isinstance(pe.tag, str):
                self.prop(s, pe, base)
        return s

    def prop(self, s, pe, base):
        p = qname(pe.tag)
        r = pe.get("{%s}resource" % RDF)
        kids = [k for k in pe if isinstance(k.tag, str)]
        if r is not None:
            self.add(s, p, ("iri", self.res(base, r)))
        elif pe.get("{%s}nodeID" % RDF) is not None:
            self.add(s, p, ("iri", "_:n" + pe.get("{%s}nodeID" % RDF)))
        elif pe.get("{%s}parseType" % RDF) == "Resource":
            o = self.new_blank()
            self.add(s, p, ("iri", o))
            for k in kids:
                self.prop(o, k, base)
        elif kids:
            self.add(s, p, ("iri", self.node(kids[0], base)))
        else:
            lang = pe.xpath("string(ancestor-or-self::*[@xml:lang][1]/@xml:lang)")
            self.add(s, p, ("lit", (pe.text or "").strip(), lang))

    def get(self, s, p):
        return self.p.get(s, {}).get(p, [])

    def one(self, s, p):
        v = self.get(s, p)
        return v[0][1] if v else None


def rank_of(g, s):
    r = g.one(s, GTS + "rank")
    if r and r.startswith(RANK):
        return RANKS.get(r[len(RANK):])
    for kind, t in g.get(s, RDF + "type"):
        if t.startswith(GTS) and t[len(GTS):] in RANKS:
            return RANKS[t[len(GTS):]]
    return None


def uncertainty(g, x):
    u = g.one(x, GTS + "positionalUncertainty")
    d = g.one(u, TIME + "numericDuration") if u else None
    return float(d) if d is not None else None


def bound(g, x):
    """(Ma, uncertainty) of a boundary: inline ischart:inMYA (2024-12) or
    time:inTemporalPosition/time:numericPosition (2020, 2017), in Ma when
    the file gives Ma, else from years BP."""
    v = g.one(x, INMYA)
    if v is not None:
        m = g.one(x, "https://schema.org/marginOfError")
        return float(v), (float(m) if m is not None else None)
    positions = [y for _, y in g.get(x, TIME + "inTemporalPosition")]
    ma = [y for y in positions if g.one(y, TIME + "hasTRS") in (None, TRS + "ma") and g.one(y, TIME + "numericPosition")]
    bp = [y for y in positions if g.one(y, TIME + "hasTRS") == TRS + "bp" and g.one(y, TIME + "numericPosition")]
    if ma:
        y, value = ma[0], float(g.one(ma[0], TIME + "numericPosition"))
    elif bp:
        y, value = bp[0], float(g.one(bp[0], TIME + "numericPosition")) / 1e6
    else:
        return None, None
    u = uncertainty(g, y)
    if u is None:
        u = uncertainty(g, x)
    return value, u


def release_intervals(path):
    g = Graph(path)
    out = {}
    for s in g.order:
        r = rank_of(g, s)
        if not r or g.one(s, OWL_DEPRECATED) == "true":
            continue
        ob, ou = bound(g, g.one(s, TIME + "hasBeginning"))
        yb, yu = bound(g, g.one(s, TIME + "hasEnd"))
        colour = g.one(s, "https://schema.org/color")
        out[s] = {"rank": r, "older": ob, "older_unc": ou, "younger": yb, "younger_unc": yu,
                  "colour": colour.upper() if colour else None}
    return out


# ---- bathychron ----
def run(*args):
    return subprocess.run([BC] + list(args), capture_output=True, text=True)


def listed(db, name):
    r = run("timescale", "list", db, "--name", name, "--format", "csv")
    if r.returncode != 0:
        raise RuntimeError(r.stderr.strip())
    return {row["iri"]: row for row in csv.DictReader(io.StringIO(r.stdout))}


def num(s):
    return float(s) if s != "" else None


def same(a, b):
    if a is None or b is None:
        return a is None and b is None
    return math.isclose(a, b, rel_tol=0, abs_tol=1e-9)


def compare(label, want, got, colours=True):
    checked = 0
    for iri, w in want.items():
        if w["rank"] not in CHECKED_RANKS:
            continue
        checked += 1
        row = got.get(iri)
        if row is None:
            fail(label, "%s missing" % iri)
            return
        for key in ("older", "older_unc", "younger", "younger_unc"):
            col = {"older": "older_ma", "younger": "younger_ma"}.get(key, key)
            if not same(w[key], num(row[col])):
                fail(label, "%s %s: file %s, bathychron %s" % (row["name"], col, w[key], row[col]))
                return
        if row["rank"] != w["rank"]:
            fail(label, "%s rank: file %s, bathychron %s" % (row["name"], w["rank"], row["rank"]))
            return
        if colours and w["colour"] and row["colour"] != w["colour"]:
            fail(label, "%s colour: file %s, bathychron %s" % (row["name"], w["colour"], row["colour"]))
            return
    if checked < 150:
        fail(label, "only %d stages/series/systems checked" % checked)
    else:
        ok("%s_%d_intervals" % (label, checked))


def tsv_chart(path):
    """The intervals table of a chart TSV (reference/README.md)."""
    rows = {}
    with open(path, encoding="utf-8") as f:
        lines = [l.rstrip("\n") for l in f if not l.startswith("#") or l.startswith("# labels")]
    header = lines[0].split("\t")
    for l in lines[1:]:
        if l.startswith("# labels"):
            break
        r = dict(zip(header, l.split("\t")))
        r["older_ma"], r["younger_ma"] = r["older_ma"], r["younger_ma"]
        rows[r["iri"]] = r
    return rows


def main():
    if not os.access(BC, os.X_OK):
        fail("program", "%s not built" % BC)
        return
    tmp = tempfile.mkdtemp()
    db = os.path.join(tmp, "a.gpkg")
    r = run("init", db)
    if r.returncode != 0:
        fail("init", r.stderr.strip())
        return

    want24 = release_intervals(os.path.join(REF, "ics-chart-2024-12.skos.rdf"))
    want20 = release_intervals(os.path.join(REF, "ics-chart-2020.skos.rdf"))

    # (a) loaded from the RDF file and listed from the database
    for tag, fname, want in (("2024_12", "ics-chart-2024-12.skos.rdf", want24), ("2020", "ics-chart-2020.skos.rdf", want20)):
        r = run("timescale", "load", db, os.path.join(REF, fname), "--name", "rdf-" + tag)
        if r.returncode != 0:
            fail("load_" + tag, r.stderr.strip())
            continue
        compare("rdf_%s_bounds" % tag, want, listed(db, "rdf-" + tag))
    # (b, c) the built-in charts, as stored by init and as shipped
    compare("builtin_db_2024_12_bounds", want24, listed(db, "ics-2024-12"))
    compare("builtin_db_2020_bounds", want20, listed(db, "ics-2020"), colours=False)
    compare("builtin_tsv_2024_12_bounds", want24, tsv_chart(os.path.join(TOP, "reference/charts/ics-2024-12.tsv")))
    compare("builtin_tsv_2020_bounds", want20, tsv_chart(os.path.join(TOP, "reference/charts/ics-2020.tsv")), colours=False)

    # The 2020 release has no colours: the built-in 2020 chart takes the
    # 2024-12 release's colour of the same interval (same IRI).
    got20 = listed(db, "ics-2020")
    wrong = [row["name"] for iri, row in got20.items() if iri in want24 and row["colour"] != want24[iri]["colour"]]
    if wrong:
        fail("builtin_2020_colours_from_2024_12", ", ".join(wrong[:5]))
    else:
        ok("builtin_2020_colours_from_2024_12")

    # (e) colour spot checks, values as written in ics-chart-2024-12.skos.rdf (schema:color)
    got24 = listed(db, "ics-2024-12")
    base = "http://resource.geosciml.org/classifier/ics/ischart/"
    for local, colour in (("Maastrichtian", "#F2FA8C"), ("UpperCretaceous", "#A6D84A"), ("CambrianSeries2", "#99C078"),
                          ("Cambrian", "#7FA056"), ("Precambrian", "#F74370")):
        row = got24.get(base + local)
        if row and row["colour"] == colour and want24[base + local]["colour"] == colour:
            ok("colour_" + local)
        else:
            fail("colour_" + local, "bathychron %s, file %s, expected %s" % (row and row["colour"], want24.get(base + local, {}).get("colour"), colour))

    # 2017: the release states Capitanian's end as the base of the Guadalupian
    # (272.95 Ma), older than its beginning (265.1 Ma); bathychron refuses the
    # file with the place. A copy with that one end pointed at BaseLopingian
    # (the base of the Wuchiapingian, 259.1 Ma, the Capitanian's end in the
    # 2020 release) loads, and every bound matches the file.
    p17 = os.path.join(REF, "ics-chart-2017.skos.rdf")
    want17 = release_intervals(p17)
    cap = want17.get(base + "Capitanian")
    if cap and cap["younger"] > cap["older"]:
        ok("file_2017_capitanian_inverted")
    else:
        fail("file_2017_capitanian_inverted", str(cap))
    r = run("timescale", "load", db, p17)
    if r.returncode == 1 and "time:hasEnd: interval <%sCapitanian> ends at 272.95 Ma" % base in r.stderr:
        ok("load_2017_refused_with_place")
    else:
        fail("load_2017_refused_with_place", "exit %d: %s" % (r.returncode, r.stderr.strip()))
    tree = etree.parse(p17, etree.XMLParser(resolve_entities=False, no_network=True, load_dtd=False))
    cap_el = tree.xpath("//*[@rdf:about=$i]", namespaces={"rdf": RDF}, i=base + "Capitanian")[0]
    end = cap_el.find("{%s}hasEnd" % TIME)
    boundary = end[0]
    end.remove(boundary)
    tree.getroot().append(boundary)
    end.set("{%s}resource" % RDF, base + "BaseLopingian")
    fixed = os.path.join(tmp, "ics-chart-2017-fixed.skos.rdf")
    tree.write(fixed, xml_declaration=True, encoding="utf-8")
    want17 = release_intervals(fixed)
    r = run("timescale", "load", db, fixed, "--name", "rdf-2017")
    if r.returncode != 0:
        fail("load_2017_fixed", r.stderr.strip())
    else:
        compare("rdf_2017_bounds", want17, listed(db, "rdf-2017"), colours=False)
    subprocess.run(["rm", "-rf", tmp])


if __name__ == "__main__":
    try:
        main()
    except Exception as e:  # a crash is a failure, never a silent pass
        fail("test_chart_bounds", repr(e))
    sys.exit(1 if failures else 0)
