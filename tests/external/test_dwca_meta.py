#!/usr/bin/python3
"""test_dwca_meta.py - checks the Darwin Core Archives bathychron writes
(export --format dwca, zip and folder) and ships (import/demo/archive)
against the structure of a DwC-A metafile, independently of the C reader:
parsed with lxml, data files read with Python's csv module.

Sources (beside each check below):
  [TG]  Darwin Core Maintenance Group (2023) Darwin Core text guide, TDWG,
        http://rs.tdwg.org/dwc/terms/guides/text/2023-09-13, and its schema
        tdwg_dwc_text.xsd, as summarised in check-values.md section 8d.
  [DWC] List of Darwin Core terms, TDWG (check-values.md sections 8a-8c:
        the term names are read from that file at run time).
  [CA]  Chronometric Age extension term names (chrono: namespace), from
        memory, cross-checked against published term lists found by search.
Prints "ok NAME" / "FAIL NAME: why" per check.
"""
import csv
import io
import os
import re
import shutil
import subprocess
import sys
import tempfile
import zipfile

from lxml import etree

TOP = os.environ.get("BC_SOURCE_DIR") or os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
SHARED = os.environ.get("BC_SHARED_DIR") or os.path.join(TOP, "..", "shared")
BC = os.environ.get("BC_PROGRAM") or os.path.join(TOP, "build", "bathychron")
NS = "http://rs.tdwg.org/dwc/text/"
DWC = "http://rs.tdwg.org/dwc/terms/"
CHRONO = "http://rs.tdwg.org/chrono/terms/"
OWN = "https://bathychron.invalid/terms/"
OWN_COLS = "https://bathychron.invalid/columns/"
OWN_TERMS = {"taxonGroup", "minimumPaleodepthInMeters", "maximumPaleodepthInMeters",
             "depositionalEnvironment", "preservationMode"}
# [CA] from memory (Chronometric Age extension, TDWG)
CHRONO_TERMS = {"earliestChronometricAge", "earliestChronometricAgeReferenceSystem",
                "latestChronometricAge", "latestChronometricAgeReferenceSystem"}
# Darwin Core Taxon terms used by design.md's input columns that check-values
# section 8 does not list (it lists scientificName and taxonRank only): from memory.
EXTRA_DWC = {"order", "family", "genus"}

failures = 0


def ok(name):
    print("ok " + name)


def fail(name, why):
    global failures
    failures += 1
    print("FAIL %s: %s" % (name, why))


def dwc_terms():
    """Term names of check-values.md sections 8a-8c [DWC]."""
    text = open(os.path.join(SHARED, "check-values.md"), encoding="utf-8").read()
    start = text.index("## 8.")
    end = text.index("### 8d", start)
    return set(re.findall(r"\b[a-z][A-Za-z]+\b", text[start:end])) | EXTRA_DWC


def unescape(s):
    return s.replace("\\t", "\t").replace("\\n", "\n").replace("\\r", "\r")


def problems(meta_bytes, read, terms):
    """Structure problems of one archive (meta.xml bytes, read(name) -> bytes)."""
    out = []
    root = etree.fromstring(meta_bytes, etree.XMLParser(resolve_entities=False, no_network=True))
    if root.tag != "{%s}archive" % NS:                                     # [TG] root element and namespace
        return ["root element is %s" % root.tag]
    cores = root.findall("{%s}core" % NS)
    exts = root.findall("{%s}extension" % NS)
    if len(cores) != 1:                                                     # [TG] exactly one core
        out.append("%d <core> elements" % len(cores))
    for part in cores + exts:
        tag = etree.QName(part).localname
        if not part.get("rowType"):                                         # [TG] rowType required
            out.append("%s without rowType" % tag)
            continue
        locs = part.findall("{%s}files/{%s}location" % (NS, NS))
        if len(locs) < 1:                                                   # [TG] files/location
            out.append("%s without <files><location>" % tag)
            continue
        key = part.find("{%s}%s" % (NS, "id" if tag == "core" else "coreid"))
        if tag == "extension" and key is None:                              # [TG] coreid required in extensions
            out.append("extension without <coreid>")
        if tag == "core" and exts and key is None:                          # [TG] id required with extensions
            out.append("core without <id> although there are extensions")
        delim = unescape(part.get("fieldsTerminatedBy", ","))              # [TG] default ","
        quote = part.get("fieldsEnclosedBy", '"')                           # [TG] default '"', "" = none
        skip = int(part.get("ignoreHeaderLines", "0"))                      # [TG] default 0
        enc = part.get("encoding", "UTF-8")
        fields = part.findall("{%s}field" % NS)
        idx = []
        for f in fields:
            term = f.get("term")
            if not term:                                                    # [TG] term required
                out.append("field without term")
                continue
            i = f.get("index")
            if i is None and f.get("default") is None:
                out.append("field %s with neither index nor default" % term)
            if i is not None:
                if not re.fullmatch(r"[0-9]+", i):
                    out.append("field %s index %r" % (term, i))
                    continue
                idx.append(int(i))
            local = term.rsplit("/", 1)[-1]
            if term.startswith(DWC):
                if local not in terms:                                      # [DWC]
                    out.append("term %s is not a Darwin Core term" % term)
            elif term.startswith(CHRONO):
                if local not in CHRONO_TERMS:                               # [CA]
                    out.append("term %s is not a Chronometric Age term" % term)
            elif term.startswith(OWN):
                if local not in OWN_TERMS:
                    out.append("term %s is not one of the project's five terms" % term)
            elif not term.startswith(OWN_COLS):
                out.append("term %s in no known namespace" % term)
        if len(idx) != len(set(idx)):                                       # dwca_check.py: no duplicate index
            out.append("%s: duplicate column index" % tag)
        try:
            data = read(locs[0].text.strip()).decode(enc)
        except Exception as e:  # noqa: BLE001 - any failure is a finding
            out.append("%s: cannot read %s: %s" % (tag, locs[0].text, e))
            continue
        rows = list(csv.reader(io.StringIO(data, newline=""), delimiter=delim,
                               quotechar=quote if quote else None,
                               quoting=csv.QUOTE_MINIMAL if quote else csv.QUOTE_NONE))
        width = max(idx + [int(key.get("index")) if key is not None else 0]) + 1
        for n, r in enumerate(rows[skip:], start=skip + 1):
            if len(r) < width:
                out.append("%s line %d: %d fields, index needs %d" % (locs[0].text, n, len(r), width))
                break
    return out


def check_archive(name, path, terms, expect_ok=True):
    if os.path.isdir(path):
        def read(n):
            return open(os.path.join(path, n), "rb").read()
    else:
        z = zipfile.ZipFile(path)

        def read(n):
            return z.read(n)
    p = problems(read("meta.xml"), read, terms)
    if expect_ok:
        ok(name) if not p else fail(name, "; ".join(p[:5]))
    else:
        ok(name) if p else fail(name, "a broken archive passed the check")
    return read


def main():
    try:
        terms = dwc_terms()
    except (OSError, ValueError) as e:
        fail("dwc_term_list", "cannot read section 8 of check-values.md in BC_SHARED_DIR: %s" % e)
        return
    # the reference example of check-values 8d passes (control)
    check_archive("example_archive_structure", os.path.join(TOP, "tests", "fixtures", "dwca-example"), terms)
    check_archive("demo_archive_structure", os.path.join(TOP, "import", "demo", "archive"), terms)
    t = tempfile.mkdtemp()
    try:
        db = os.path.join(t, "db.gpkg")
        run = [subprocess.run([BC, "init", db], capture_output=True),
               subprocess.run([BC, "import", db, os.path.join(TOP, "import", "demo", "occurrences.csv")], capture_output=True)]
        if run[0].returncode != 0 or run[1].returncode not in (0, 1):
            fail("export_setup", (run[0].stderr + run[1].stderr).decode()[:300])
            return
        for suffix in (".zip", ""):
            out = os.path.join(t, "export" + suffix)
            r = subprocess.run([BC, "export", db, "--format", "dwca", "-o", out], capture_output=True)
            if r.returncode != 0:
                fail("export_dwca" + suffix.replace(".", "_"), r.stderr.decode()[:300])
                continue
            read = check_archive("export_structure" + suffix.replace(".", "_"), out, terms)
            # the EML document is well-formed XML with no DTD
            try:
                doc = etree.fromstring(read("eml.xml"), etree.XMLParser(resolve_entities=False, no_network=True))
                ok("export_eml" + suffix.replace(".", "_")) if doc.getroottree().docinfo.doctype == "" else \
                    fail("export_eml", "has a DOCTYPE")
            except Exception as e:  # noqa: BLE001
                fail("export_eml" + suffix.replace(".", "_"), str(e))
        # negative controls: the check must find a removed rowType and a foreign term
        neg = os.path.join(t, "neg")
        shutil.copytree(os.path.join(t, "export"), neg)
        meta = open(os.path.join(neg, "meta.xml"), encoding="utf-8").read()
        open(os.path.join(neg, "meta.xml"), "w", encoding="utf-8").write(
            meta.replace('rowType="http://rs.tdwg.org/dwc/terms/Occurrence" ', "", 1))
        check_archive("negative_control_rowtype", neg, terms, expect_ok=False)
        open(os.path.join(neg, "meta.xml"), "w", encoding="utf-8").write(
            meta.replace(DWC + "scientificName", DWC + "scientificNom", 1))
        check_archive("negative_control_term", neg, terms, expect_ok=False)
    finally:
        shutil.rmtree(t, ignore_errors=True)


main()
sys.exit(1 if failures else 0)
