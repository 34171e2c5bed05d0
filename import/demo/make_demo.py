#!/usr/bin/env python3
"""make_demo.py - writes the INVENTED demo compilation (import/demo/).

Everything here is invented: the taxa (order Fictocrinida and its genera),
the localities, the countries, the authors and the references. The numbers
are drawn from a seeded random generator so the files are reproducible:

    python3 import/demo/make_demo.py

The scenario: a compilation of stalked and free-living sea-lily occurrences
from the Jurassic to the Neogene in which the share of deep-water records
rises towards the present, written the way a real literature compilation is
written (ages in several languages and forms, depths as numbers, ranges or
environment terms only, several preservation modes, coordinates in decimal,
DMS and a projected CRS) with a handful of deliberately bad rows.
"""
import csv
import io
import os
import random

rng = random.Random(20261201)
here = os.path.dirname(os.path.abspath(__file__))

# (stage, older_ma, younger_ma, forms the literature uses for it)
STAGES = [
    ("Hettangian", 201.4, 199.5, ["Hettangian", "Hettangien", "lower Hettangian"]),
    ("Sinemurian", 199.5, 192.9, ["Sinemurian", "Sinémurien", "Sinemurium"]),
    ("Pliensbachian", 192.9, 184.2, ["Pliensbachian", "Pliensbachien", "upper Pliensbachian", "Lias"]),
    ("Toarcian", 184.2, 174.7, ["Toarcian", "Toarcien", "early Toarcian", "Toarciano"]),
    ("Aalenian", 174.7, 170.9, ["Aalenian", "Aalénien", "Dogger"]),
    ("Bajocian", 170.9, 168.2, ["Bajocian", "Bajocien", "late Bajocian"]),
    ("Bathonian", 168.2, 165.3, ["Bathonian", "Bathonien", "Middle Jurassic"]),
    ("Callovian", 165.3, 161.5, ["Callovian", "Callovien", "?Callovian"]),
    ("Oxfordian", 161.5, 154.8, ["Oxfordian", "Oxfordien", "Oxfordium", "Malm"]),
    ("Kimmeridgian", 154.8, 149.2, ["Kimmeridgian", "Kimméridgien", "Kimmeridgiense"]),
    ("Tithonian", 149.2, 143.1, ["Tithonian", "Tithonien", "Upper Jurassic"]),
    ("Berriasian", 143.1, 137.7, ["Berriasian", "Berriasien", "Neocomian"]),
    ("Valanginian", 137.7, 132.6, ["Valanginian", "Valanginien", "Valanginiano"]),
    ("Hauterivian", 132.6, 125.8, ["Hauterivian", "Hauterivien", "cf. Hauterivian"]),
    ("Barremian", 125.8, 121.4, ["Barremian", "Barrémien", "Barremium"]),
    ("Aptian", 121.4, 113.2, ["Aptian", "Aptien", "Gargasian"]),
    ("Albian", 113.2, 100.5, ["Albian", "Albien", "upper Albian", "Albiense"]),
    ("Cenomanian", 100.5, 93.9, ["Cenomanian", "Cénomanien", "CENOMANIAN"]),
    ("Turonian", 93.9, 89.8, ["Turonian", "Turonien", "middle Turonian"]),
    ("Coniacian", 89.8, 86.3, ["Coniacian", "Coniacien", "Senonian"]),
    ("Santonian", 86.3, 83.6, ["Santonian", "Santonien", "?Santonian"]),
    ("Campanian", 83.6, 72.1, ["Campanian", "Campanien", "upper Campanian", "Campanian?", "83-72 Ma"]),
    ("Maastrichtian", 72.1, 66.0, ["Maastrichtian", "Maastrichtien", "Maastrichtium", "maastrichtiano",
                                   " MAASTRICHTIAN ", "late Maastrichtian", "probably Maastrichtian"]),
    ("Danian", 66.0, 61.6, ["Danian", "Danien", "early Danian"]),
    ("Selandian", 61.6, 59.2, ["Selandian", "Sélandien"]),
    ("Thanetian", 59.2, 56.0, ["Thanetian", "Thanétien", "upper Paleocene"]),
    ("Ypresian", 56.0, 47.8, ["Ypresian", "Yprésien", "early Eocene"]),
    ("Lutetian", 47.8, 41.2, ["Lutetian", "Lutétien", "Lutetium"]),
    ("Bartonian", 41.2, 37.71, ["Bartonian", "Bartonien"]),
    ("Priabonian", 37.71, 33.9, ["Priabonian", "Priabonien", "late Eocene"]),
    ("Rupelian", 33.9, 27.82, ["Rupelian", "Rupélien", "Rupelium"]),
    ("Chattian", 27.82, 23.04, ["Chattian", "Chattien"]),
    ("Aquitanian", 23.04, 20.44, ["Aquitanian", "Aquitanien"]),
    ("Burdigalian", 20.44, 15.98, ["Burdigalian", "Burdigalien", "Burdigaliano"]),
    ("Langhian", 15.98, 13.82, ["Langhian", "Langhien"]),
    ("Serravallian", 13.82, 11.63, ["Serravallian", "Serravallien"]),
    ("Tortonian", 11.63, 7.246, ["Tortonian", "Tortonien", "Tortoniano"]),
    ("Messinian", 7.246, 5.333, ["Messinian", "Messinien"]),
    ("Zanclean", 5.333, 3.6, ["Zanclean", "Zancléen", "early Pliocene"]),
    ("Piacenzian", 3.6, 2.58, ["Piacenzian", "Plaisancien", "Piacenzian"]),
]
# two-column form: (earliest, latest)
PAIRS = [("Campanian", "Maastrichtian"), ("Santonian", "Campanian"), ("Oxfordian", "Kimmeridgian"),
         ("Aptian", "Albian"), ("Bartonian", "Priabonian"), ("Langhian", "Serravallian")]
RANGES = ["Campanian-Maastrichtian", "Santonian–Campanian", "Turonian to Coniacian",
          "Maastrichtian/Campanian", "Bajocian-Bathonian", "Ypresian–Lutetian"]

ENVIRONMENTS = {  # term -> whether it is shallow
    "shoreface": True, "lagoon": True, "reef": True, "inner shelf": True, "middle shelf": True,
    "offshore transition": True, "outer shelf": False, "upper bathyal": False, "slope": False,
    "middle bathyal": False, "bathyal": False, "lower bathyal": False, "abyssal": False,
}

ORDER = "Fictocrinida"
FAMILIES = {
    "Fictocrinidae": ["Fictocrinus", "Nullacrinus", "Vanitocrinus"],
    "Somnicrinidae": ["Somnicrinus", "Phantasmocrinus"],
    "Chimaerocrinidae": ["Chimaerocrinus", "Ficticrinus"],
}
EPITHETS = ["inventus", "imaginarius", "fabulosus", "nebulosus", "fictilis", "umbratilis", "somnians",
            "placidus", "vagus", "obscurus"]
# free-living (unstalked) forms
FREE_FAMILY = ("Erraticomidae", ["Erraticoma", "Vagatella"])

COUNTRIES = ["Averland", "Brenmark", "Calvary Isles", "Dostrania"]
LOCALITIES = []
for i, name in enumerate(["Lindqvar Quarry", "Tessaly Ridge", "Oskerby Cutting", "Harnwick Scar",
                          "Pellmoor Pit", "Vardun Gorge", "Ellisford Shore", "Marrowby Brickpit",
                          "Quennel Bay", "Stavrin Hill", "Ostmere Borehole 3", "Gallowtree Bank",
                          "Fennick Cove", "Wrayholm Section", "Kessock Point", "Brindle Mouth"]):
    lat = round(rng.uniform(38, 58), 5)
    lon = round(rng.uniform(-8, 24), 5)
    LOCALITIES.append((name, COUNTRIES[i % 4], lat, lon))
FORMATIONS = ["Orlan Marl Fm", "Vessary Chalk Fm", "Tarn Limestone Fm", "Brenmoor Clay Fm", "Quill Sandstone Fm"]

AUTHORS = [("quillfeather1987", "Quillfeather, Agnes and Marrowby, Tobias", 1987,
            "Sea lilies of the {O}rlan marls", "Journal of Invented Palaeontology", "12", "101--140"),
           ("marrowby1994", "Marrowby, Tobias", 1994,
            "A monograph of the {F}ictocrinidae", "Monographs of the Imaginary Society", "3", "1--412"),
           ("oskarsd{\\'o}ttir2003", "Oskarsd{\\'o}ttir, Hild and Pell, Ronan", 2003,
            "Deep-water crinoid meadows of the {V}essary {B}asin", "Fictional Geoscience Letters", "41", "77--96"),
           ("pell2011", "Pell, Ronan and M{\\\"u}ller-Stav, Ines and Fenwick, Idris", 2011,
            "Columnal taphonomy on an invented slope", "Bulletin of Made-up Stratigraphy", "58", "233--260"),
           ("fenwick2019", "Fenwick, Idris", 2019,
            "Cenozoic sea lilies of {B}renmark", "Journal of Invented Palaeontology", "44", "1--38"),
           ("vance2022", "Vance, Ottoline and Quillfeather, Agnes", 2022,
            "New {E}rraticomidae from {D}ostrania", "Fictional Geoscience Letters", "60", "500--517")]
REFKEYS = ["quillfeather1987", "marrowby1994", "oskarsdottir2003", "pell2011", "fenwick2019", "vance2022"]


def deep_share(age):
    """Invented trend: deep-water records become commoner towards the present."""
    if age > 145:
        return 0.15
    if age > 100:
        return 0.25
    if age > 66:
        return 0.40
    if age > 23:
        return 0.65
    return 0.85


def dms(value, pos, neg):
    h = pos if value >= 0 else neg
    v = abs(value)
    d = int(v)
    m = int((v - d) * 60)
    s = (v - d - m / 60) * 3600
    return f"{d}°{m:02d}′{s:04.1f}″{h}"


COLUMNS = ["occurrenceID", "scientificName", "taxonGroup", "order", "family", "genus",
           "locality", "country", "decimalLatitude", "decimalLongitude", "geodeticDatum",
           "coordinateUncertaintyInMeters", "verbatimCoordinates", "verbatimSRS",
           "earliestAgeOrLowestStage", "latestAgeOrHighestStage",
           "earliestEpochOrLowestSeries", "latestEpochOrHighestSeries",
           "earliestPeriodOrLowestSystem", "latestPeriodOrHighestSystem",
           "earliestChronometricAge", "latestChronometricAge",
           "formation", "member", "bed",
           "minimumPaleodepthInMeters", "maximumPaleodepthInMeters",
           "depositionalEnvironment", "preservationMode",
           "individualCount", "associatedReferences", "collectorNotes"]

rows = []


def new_row():
    return {c: "" for c in COLUMNS}


n = 0
for k in range(300):
    st = rng.choice(STAGES)
    stage, old, young, forms = st
    mid = (old + young) / 2
    is_free = rng.random() < 0.15
    if is_free:
        fam, genera = FREE_FAMILY
        group = "free-living"
    else:
        fam = rng.choice(list(FAMILIES))
        genera = FAMILIES[fam]
        group = "stalked"
    genus = rng.choice(genera)
    name = f"{genus} {rng.choice(EPITHETS)}"
    loc = rng.choice(LOCALITIES)
    r = new_row()
    n += 1
    r["occurrenceID"] = f"DEMO-{n:04d}"
    r["scientificName"] = name
    r["taxonGroup"] = group
    r["order"] = ORDER
    r["family"] = fam
    r["genus"] = genus
    r["locality"] = loc[0]
    r["country"] = loc[1]
    r["formation"] = rng.choice(FORMATIONS)
    if rng.random() < 0.3:
        r["bed"] = f"bed {rng.randint(1, 40)}"
    # coordinates: decimal mostly, some DMS, some with none
    c = rng.random()
    if c < 0.6:
        r["decimalLatitude"] = f"{loc[2]:.5f}"
        r["decimalLongitude"] = f"{loc[3]:.5f}"
        r["geodeticDatum"] = "WGS84"
        r["coordinateUncertaintyInMeters"] = str(rng.choice([30, 100, 250, 1000]))
    elif c < 0.8:
        r["verbatimCoordinates"] = f"{dms(loc[2], 'N', 'S')} {dms(loc[3], 'E', 'W')}"
        r["verbatimSRS"] = "EPSG:4326"
    # else: no coordinates, as in many literature records
    # age
    a = rng.random()
    if a < 0.70:
        r["earliestAgeOrLowestStage"] = rng.choice(forms)
    elif a < 0.80:
        e, l = rng.choice(PAIRS)
        r["earliestAgeOrLowestStage"] = e
        r["latestAgeOrHighestStage"] = l
        old = next(s[1] for s in STAGES if s[0] == e)
        young = next(s[2] for s in STAGES if s[0] == l)
        mid = (old + young) / 2
    elif a < 0.90:
        t = rng.choice(RANGES)
        r["earliestAgeOrLowestStage"] = t
        mid = 75.0 if "Campan" in t else mid
    else:
        r["earliestAgeOrLowestStage"] = stage
        r["earliestChronometricAge"] = f"{old:.1f}"
        r["latestChronometricAge"] = f"{young:.1f}"
    # depth: deep with the invented trend probability
    deep = rng.random() < deep_share(mid)
    p = rng.random()
    if p < 0.45:
        if deep:
            lo = rng.choice([250, 300, 400, 600, 800, 1000])
            hi = lo + rng.choice([0, 100, 200, 400])
        else:
            lo = rng.choice([5, 10, 20, 30, 50, 80])
            hi = lo + rng.choice([0, 10, 30, 60, 100])
            hi = min(hi, 180)
        r["minimumPaleodepthInMeters"] = str(lo)
        r["maximumPaleodepthInMeters"] = str(hi)
    elif p < 0.55:
        d = rng.choice([300, 450, 700]) if deep else rng.choice([15, 40, 90])
        r["minimumPaleodepthInMeters"] = str(d)  # single value
    elif p < 0.62:
        # straddles the shelf edge
        r["minimumPaleodepthInMeters"] = "100"
        r["maximumPaleodepthInMeters"] = "400"
    else:
        terms = [t for t, shallow in ENVIRONMENTS.items() if shallow != deep]
        r["depositionalEnvironment"] = rng.choice(terms)
    # preservation: loose columnals more often in deep (transported) settings
    if deep:
        r["preservationMode"] = rng.choice(["columnal", "columnal", "pluricolumnal", "crown", "calyx", "holdfast"])
    else:
        r["preservationMode"] = rng.choice(["crown", "calyx", "arm", "pluricolumnal", "columnal", "unknown"])
    r["individualCount"] = str(rng.choice([1, 1, 1, 2, 3, 5, 12]))
    r["associatedReferences"] = rng.choice(REFKEYS + ["marrowby1994", "marrowby1994"])
    if rng.random() < 0.1:
        r["collectorNotes"] = rng.choice(["see plate 4", "cited as 'abundant'", "coll. R. Pell, 1998",
                                          "=fig. 3a", "re-identified"])
    rows.append(r)

# A few rows with coordinates in a projected CRS (UTM zone 31N, EPSG:32631);
# eastings/northings written as a field geologist would read them off a map.
for i, (e, nn, lat_hint) in enumerate([(322708, 5597211, "Ellisford Shore"),
                                       (500000, 4982950, "Vardun Gorge"),
                                       (412300, 5411800, "Pellmoor Pit")]):
    r = dict(rows[i * 7])
    n += 1
    r["occurrenceID"] = f"DEMO-{n:04d}"
    r["locality"] = lat_hint + " (grid ref.)"
    r["decimalLatitude"] = r["decimalLongitude"] = r["geodeticDatum"] = ""
    r["coordinateUncertaintyInMeters"] = "50"
    r["verbatimCoordinates"] = f"{e} E {nn} N"
    r["verbatimSRS"] = "EPSG:32631"
    rows.append(r)

# Deliberately bad rows: each must end in the quarantine with its reason.
bad = []
b = dict(rows[0]); b["occurrenceID"] = "DEMO-BAD1"; b["earliestAgeOrLowestStage"] = "Jurrasick-ish"; bad.append(b)
b = dict(rows[1]); b["occurrenceID"] = "DEMO-BAD2"; b["minimumPaleodepthInMeters"] = "-40"; b["maximumPaleodepthInMeters"] = ""; b["depositionalEnvironment"] = ""; bad.append(b)
b = dict(rows[2]); b["occurrenceID"] = "DEMO-BAD3"; b["preservationMode"] = "fragment"; bad.append(b)
b = dict(rows[3]); b["occurrenceID"] = "DEMO-BAD4"; b["decimalLatitude"] = "123.4"; b["decimalLongitude"] = "10.0"; b["verbatimCoordinates"] = ""; bad.append(b)
b = dict(rows[4]); b["occurrenceID"] = "DEMO-BAD5"; b["minimumPaleodepthInMeters"] = "500"; b["maximumPaleodepthInMeters"] = "200"; b["depositionalEnvironment"] = ""; bad.append(b)
b = dict(rows[5]); b["occurrenceID"] = "DEMO-BAD6"; b["minimumPaleodepthInMeters"] = "deep"; b["maximumPaleodepthInMeters"] = ""; b["depositionalEnvironment"] = ""; bad.append(b)
b = dict(rows[6]); b["occurrenceID"] = "DEMO-BAD7"; b["earliestChronometricAge"] = "66"; b["latestChronometricAge"] = "83"; b["earliestAgeOrLowestStage"] = ""; b["latestAgeOrHighestStage"] = ""; bad.append(b)
for i, b in enumerate(bad):
    rows.insert(40 + i * 37, b)

buf = io.StringIO()
w = csv.DictWriter(buf, fieldnames=COLUMNS, lineterminator="\r\n")
w.writeheader()
for r in rows:
    w.writerow(r)
with open(os.path.join(here, "occurrences.csv"), "w", encoding="utf-8", newline="") as f:
    f.write(buf.getvalue())

with open(os.path.join(here, "references.bib"), "w", encoding="utf-8") as f:
    f.write("% INVENTED references for the bathychron demo: none of these works exist.\n")
    f.write("@string{jip = \"Journal of Invented Palaeontology\"}\n\n")
    for key, auth, year, title, journal, vol, pages in AUTHORS:
        key = key.replace("{\\'o}", "o")
        jr = "jip" if journal == "Journal of Invented Palaeontology" else "{" + journal + "}"
        f.write(f"@article{{{key},\n  author = {{{auth}}},\n  year = {year},\n  title = {{{title}}},\n"
                f"  journal = {jr},\n  volume = {{{vol}}},\n  pages = {{{pages}}},\n"
                f"  doi = {{10.0000/invented.{key}}}\n}}\n\n")

print(f"wrote {len(rows)} rows ({len(bad)} deliberately bad)")
