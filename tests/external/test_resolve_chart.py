#!/usr/bin/python3
"""test_resolve_chart.py - `bathychron resolve` against the ICS chart itself.

Source: International Commission on Stratigraphy, chart data release 2024-12
(SKOS RDF/XML in $BC_SHARED_DIR/reference-data/ics-chart-2024-12.skos.rdf),
read here independently with lxml. Checks:
  - every label of every interval, in every language, that names only that
    interval resolves as `exact` to that interval's bounds;
  - NFC and NFD spellings of every label give the same answer (Python's
    unicodedata as the reference normaliser);
  - every row of reference/age-aliases.tsv has a source and its older/younger
    names are intervals of the 2024-12 chart, and the alias resolves to the
    older bound of the first and the younger bound of the second;
  - "late X" for every stage is the upper third of X (the project's own
    convention, doc/age-resolution.md: common practice, no source).
Prints "ok NAME" / "FAIL NAME: why".
"""
import os
import re
import subprocess
import sys
import unicodedata

from lxml import etree

TOP = os.environ.get("BC_SOURCE_DIR") or os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
SHARED = os.environ.get("BC_SHARED_DIR") or os.path.join(TOP, "..", "shared")
PROG = os.environ.get("BC_PROGRAM") or os.path.join(TOP, "build", "bathychron")
SKOS = os.path.join(SHARED, "reference-data", "ics-chart-2024-12.skos.rdf")

NS = {
    "skos": "http://www.w3.org/2004/02/skos/core#",
    "rdf": "http://www.w3.org/1999/02/22-rdf-syntax-ns#",
    "time": "http://www.w3.org/2006/time#",
    "ischart": "http://resource.geosciml.org/classifier/ics/ischart/",
    "gts": "http://resource.geosciml.org/ontology/timescale/gts#",
}
XML_LANG = "{http://www.w3.org/XML/1998/namespace}lang"


def ok(name):
    print("ok " + name)


def fail(name, why):
    print("FAIL %s: %s" % (name, why))


def norm(s):
    """Independent fold: NFKD, case fold, no marks, non-alphanumerics as spaces."""
    s = unicodedata.normalize("NFKD", s).casefold()
    s = "".join(c for c in s if not unicodedata.category(c).startswith("M"))
    s = "".join(c if c.isalnum() else " " for c in s)
    return " ".join(s.split())


def read_chart():
    tree = etree.parse(SKOS)
    out = {}
    for c in tree.iter("{%s}Concept" % NS["skos"]):
        iri = c.get("{%s}about" % NS["rdf"])
        b = c.find("time:hasBeginning//ischart:inMYA", NS)
        e = c.find("time:hasEnd//ischart:inMYA", NS)
        rank = c.find("gts:rank", NS)
        if b is None or e is None:
            continue
        labels = [(l.get(XML_LANG) or "", l.text.strip()) for l in c.findall("skos:prefLabel", NS) + c.findall("skos:altLabel", NS) if l.text and l.text.strip()]
        tail = iri.rsplit("/", 1)[-1]
        out[iri] = {
            "older": float(b.text), "younger": float(e.text), "labels": labels,
            "iri_words": re.sub(r"(?<=[a-z])(?=[A-Z0-9])", " ", tail),
            "rank": rank.get("{%s}resource" % NS["rdf"]).rsplit("/", 1)[-1] if rank is not None else "",
        }
    return out


def resolve(texts, *args):
    p = subprocess.run([PROG, "resolve", *args], input="\n".join(texts) + "\n", capture_output=True, text=True)
    lines = p.stdout.split("\n")
    head = lines[0].split("\t")
    rows = [dict(zip(head, l.split("\t"))) for l in lines[1:] if l]
    if len(rows) != len(texts):
        raise RuntimeError("resolve gave %d rows for %d texts: %s" % (len(rows), len(texts), p.stderr[:300]))
    return rows


def close(a, b):
    try:
        return abs(float(a) - b) <= 1e-9
    except ValueError:
        return False


def main():
    if not os.path.exists(SKOS):
        fail("resolve_chart_source", "missing " + SKOS)
        return 1
    chart = read_chart()
    # every label text, folded, -> the intervals it names
    owners = {}
    for iri, c in chart.items():
        for _, text in c["labels"]:
            owners.setdefault(norm(text), set()).add(iri)
    cases = []
    for iri, c in chart.items():
        for lang, text in c["labels"]:
            if len(owners[norm(text)]) == 1:
                cases.append((iri, lang, text))
    rows = resolve([t for _, _, t in cases])
    bad = []
    for (iri, lang, text), r in zip(cases, rows):
        c = chart[iri]
        if r["status"] != "exact" or not close(r["older_ma"], c["older"]) or not close(r["younger_ma"], c["younger"]):
            bad.append("%s@%s -> %s %s-%s" % (text, lang, r["status"], r["older_ma"], r["younger_ma"]))
    if len(cases) > 2000 and not bad:
        ok("resolve_every_label_2024_12 (%d labels)" % len(cases))
    else:
        fail("resolve_every_label_2024_12", "%d of %d wrong: %s" % (len(bad), len(cases), "; ".join(bad[:8])))

    nonascii = sorted({t for _, _, t in cases if not t.isascii()})
    nfc = resolve([unicodedata.normalize("NFC", t) for t in nonascii])
    nfd = resolve([unicodedata.normalize("NFD", t) for t in nonascii])
    diff = [a["input"] for a, b in zip(nfc, nfd) if (a["status"], a["from"], a["older_ma"]) != (b["status"], b["from"], b["older_ma"])]
    if nonascii and not diff:
        ok("resolve_nfc_equals_nfd (%d labels)" % len(nonascii))
    else:
        fail("resolve_nfc_equals_nfd", "; ".join(diff[:8]) or "no non-ASCII labels")

    # alias table
    names = {}
    for iri, c in chart.items():
        names.setdefault(norm(c["iri_words"]), iri)
        for lang, text in c["labels"]:
            if lang == "en" or lang == "":
                names.setdefault(norm(text), iri)
    path = os.path.join(TOP, "reference", "age-aliases.tsv")
    rows_in = [l.rstrip("\n").split("\t") for l in open(path, encoding="utf-8") if not l.startswith("#")]
    head, body = rows_in[0], rows_in[1:]
    col = {h: i for i, h in enumerate(head)}
    nosrc = [r[0] for r in body if len(r) != len(head) or not r[col["source"]].strip()]
    if body and not nosrc:
        ok("alias_rows_have_sources (%d rows)" % len(body))
    else:
        fail("alias_rows_have_sources", ", ".join(nosrc[:10]))

    def target(text):
        for alt in text.split("|"):
            if norm(alt) in names:
                return names[norm(alt)]
        return None

    missing = []
    want = []
    for r in body:
        o, y = target(r[col["older"]]), target(r[col["younger"]])
        if not o or not y:
            missing.append("%s -> %s / %s" % (r[0], r[col["older"]], r[col["younger"]]))
        else:
            want.append((r[0], chart[o]["older"], chart[y]["younger"]))
    if not missing:
        ok("alias_targets_in_chart_2024_12")
    else:
        fail("alias_targets_in_chart_2024_12", "; ".join(missing[:10]))
    got = resolve([w[0] for w in want])
    wrong = ["%s: %s %s-%s, expected %g-%g" % (w[0], g["status"], g["older_ma"], g["younger_ma"], w[1], w[2])
             for w, g in zip(want, got)
             if g["status"] not in ("alias", "exact") or not close(g["older_ma"], w[1]) or not close(g["younger_ma"], w[2])]
    if want and not wrong:
        ok("alias_bounds_2024_12 (%d aliases)" % len(want))
    else:
        fail("alias_bounds_2024_12", "; ".join(wrong[:8]))

    # qualifier convention on every stage
    stages = [(iri, c) for iri, c in chart.items() if c["rank"] == "Age" and any(l == "en" for l, _ in c["labels"])]
    texts = ["late " + next(t for l, t in c["labels"] if l == "en") for _, c in stages]
    got = resolve(texts)
    wrong = []
    for (iri, c), g, t in zip(stages, got, texts):
        o, y = c["older"], c["younger"]
        if g["status"] != "qualified" or not close(g["older_ma"], o - 2 * (o - y) / 3) or not close(g["younger_ma"], y):
            # the chart's rounding to 10 significant digits in the output
            if not (g["status"] == "qualified" and abs(float(g["older_ma"]) - (o - 2 * (o - y) / 3)) < 1e-6):
                wrong.append("%s -> %s %s" % (t, g["status"], g["older_ma"]))
    if stages and not wrong:
        ok("qualified_late_is_upper_third (%d stages)" % len(stages))
    else:
        fail("qualified_late_is_upper_third", "; ".join(wrong[:8]))
    return 0


if __name__ == "__main__":
    sys.exit(main())
