#!/usr/bin/env python3
"""make_archive.py - writes import/demo/archive/, the INVENTED demo compilation
(import/demo/occurrences.csv) as an unpacked Darwin Core Archive:

    python3 import/demo/make_archive.py

The archive holds the same occurrences as the CSV, spread the way archives
published elsewhere spread them, so `bathychron import` of the folder (or of
a zip of it) stores the same occurrences as the CSV:

  occurrence.txt          tab-separated core, no quote character, one header line;
                          Darwin Core terms, the project's own terms under
                          https://bathychron.invalid/terms/, the extra column
                          collectorNotes under https://bathychron.invalid/columns/
  measurementorfact.txt   MeasurementOrFact extension: numeric palaeodepths
                          ("minimum palaeodepth", "maximum palaeodepth", or one
                          "palaeodepth" row when both ends agree) in m, and the
                          preservation mode ("preservation mode")
  chronometricage.txt     ChronometricAge extension: numeric ages, most in Ma,
                          every third one in ka (the importer converts to Ma)
  eml.xml                 dataset metadata (EML 2.1.1), recorded with the batch

Values that are not plain numbers (a deliberately bad depth such as "deep")
stay in the core, so the deliberately bad rows are quarantined for the same
reasons as from the CSV.
"""
import csv
import os

here = os.path.dirname(os.path.abspath(__file__))
out = os.path.join(here, "archive")
DWC = "http://rs.tdwg.org/dwc/terms/"
OWN = "https://bathychron.invalid/terms/"
COLS = "https://bathychron.invalid/columns/"
CHRONO = "http://rs.tdwg.org/chrono/terms/"
OWN_TERMS = {"taxonGroup", "minimumPaleodepthInMeters", "maximumPaleodepthInMeters",
             "depositionalEnvironment", "preservationMode"}
MOVED = {"preservationMode", "earliestChronometricAge", "latestChronometricAge"}

with open(os.path.join(here, "occurrences.csv"), encoding="utf-8", newline="") as f:
    reader = csv.reader(f)
    header = next(reader)
    rows = list(reader)


def is_number(s):
    try:
        float(s)
        return True
    except ValueError:
        return False


def term(col):
    if col in OWN_TERMS:
        return OWN + col
    if col == "collectorNotes":
        return COLS + col
    return DWC + col


core_cols = [c for c in header if c not in MOVED]
os.makedirs(out, exist_ok=True)
mof = [["coreid", "measurementType", "measurementValue", "measurementUnit"]]
chrono = [["coreid", "earliestChronometricAge", "earliestChronometricAgeReferenceSystem",
           "latestChronometricAge", "latestChronometricAgeReferenceSystem"]]
core = [["id"] + core_cols]
n_chrono = 0
for i, r in enumerate(rows):
    d = dict(zip(header, r))
    rid = "r%04d" % (i + 1)
    lo, hi = d["minimumPaleodepthInMeters"], d["maximumPaleodepthInMeters"]
    if lo and hi and lo == hi and is_number(lo):
        mof.append([rid, "palaeodepth", lo, "m"])
        d["minimumPaleodepthInMeters"] = d["maximumPaleodepthInMeters"] = ""
    else:
        if lo and is_number(lo):
            mof.append([rid, "minimum palaeodepth", lo, "m"])
            d["minimumPaleodepthInMeters"] = ""
        if hi and is_number(hi):
            mof.append([rid, "maximum palaeodepth", hi, "m"])
            d["maximumPaleodepthInMeters"] = ""
    if d["preservationMode"]:
        mof.append([rid, "preservation mode", d["preservationMode"], ""])
    e, l = d["earliestChronometricAge"], d["latestChronometricAge"]
    if e or l:
        n_chrono += 1
        if n_chrono % 3 == 0:
            def ka(v):
                return ("%.6f" % (float(v) * 1000)).rstrip("0").rstrip(".") if v else ""
            chrono.append([rid, ka(e), "ka" if e else "", ka(l), "ka" if l else ""])
        else:
            chrono.append([rid, e, "Ma" if e else "", l, "Ma" if l else ""])
    core.append([rid] + [d[c] for c in core_cols])


def write_tab(name, table):
    with open(os.path.join(out, name), "w", encoding="utf-8", newline="") as f:
        for row in table:
            assert not any("\t" in v or "\n" in v for v in row), row
            f.write("\t".join(row) + "\n")


write_tab("occurrence.txt", core)
write_tab("measurementorfact.txt", mof)
write_tab("chronometricage.txt", chrono)

ATTRS = ('encoding="UTF-8" fieldsTerminatedBy="\\t" linesTerminatedBy="\\n" '
         'fieldsEnclosedBy="" ignoreHeaderLines="1"')
meta = ['<?xml version="1.0" encoding="UTF-8"?>',
        '<archive xmlns="http://rs.tdwg.org/dwc/text/" metadata="eml.xml">',
        '  <core rowType="%sOccurrence" %s>' % (DWC, ATTRS),
        '    <files><location>occurrence.txt</location></files>',
        '    <id index="0"/>']
for k, c in enumerate(core_cols):
    meta.append('    <field index="%d" term="%s"/>' % (k + 1, term(c)))
meta.append('    <field term="%sbasisOfRecord" default="FossilSpecimen"/>' % DWC)
meta += ['  </core>',
         '  <extension rowType="%sMeasurementOrFact" %s>' % (DWC, ATTRS),
         '    <files><location>measurementorfact.txt</location></files>',
         '    <coreid index="0"/>',
         '    <field index="1" term="%smeasurementType"/>' % DWC,
         '    <field index="2" term="%smeasurementValue"/>' % DWC,
         '    <field index="3" term="%smeasurementUnit"/>' % DWC,
         '  </extension>',
         '  <extension rowType="%sChronometricAge" %s>' % (CHRONO, ATTRS),
         '    <files><location>chronometricage.txt</location></files>',
         '    <coreid index="0"/>']
for k, c in enumerate(chrono[0][1:]):
    meta.append('    <field index="%d" term="%s%s"/>' % (k + 1, CHRONO, c))
meta += ['  </extension>', '</archive>', '']
with open(os.path.join(out, "meta.xml"), "w", encoding="utf-8") as f:
    f.write("\n".join(meta))

with open(os.path.join(out, "eml.xml"), "w", encoding="utf-8") as f:
    f.write("""<?xml version="1.0" encoding="UTF-8"?>
<eml:eml xmlns:eml="eml://ecoinformatics.org/eml-2.1.1" packageId="bathychron-demo-1" system="bathychron">
  <dataset>
    <title>Invented sea-lily occurrences, Jurassic to Neogene (bathychron demo)</title>
    <creator><individualName><givenName>Orla</givenName><surName>Marrowby</surName></individualName></creator>
    <contact><individualName><givenName>Orla</givenName><surName>Marrowby</surName></individualName></contact>
    <abstract><para>An INVENTED literature compilation for demonstrating bathychron: taxa,
    localities, people and references are fictitious. Palaeodepths are interpretations, not
    measurements.</para></abstract>
  </dataset>
</eml:eml>
""")
print("wrote %s: %d occurrences, %d measurement rows, %d chronometric ages"
      % (out, len(rows), len(mof) - 1, len(chrono) - 1))
