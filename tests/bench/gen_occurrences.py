#!/usr/bin/python3
"""gen_occurrences.py - writes a synthetic occurrence CSV for benchmarks.

Usage: gen_occurrences.py ROWS OUT.csv [SEED]
Invented taxa, localities and references only; every row is valid, with a
mix of stage pairs, numeric ages, given depths and environment-only rows,
and one extra (unknown) column.
"""
import csv
import random
import sys

STAGES = ["Santonian", "Campanian", "Maastrichtian", "Danian"]
ENVS = ["outer shelf", "upper bathyal", "shoreface", "offshore", "middle bathyal", "inner shelf"]
PRES = ["crown", "calyx", "arm", "pluricolumnal", "columnal", "holdfast"]
GENERA = ["Fictocrinus", "Imaginocrinus", "Pseudomythocrinus", "Nullocrinus", "Fabulocrinus", "Ficticrinites"]
EPITHETS = ["alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "iota", "kappa"]


def main():
    rows = int(sys.argv[1])
    out = sys.argv[2]
    rnd = random.Random(int(sys.argv[3]) if len(sys.argv) > 3 else 1)
    sites = [("Invented site %d" % i, "Norland" if i % 2 else "Suderia",
              round(rnd.uniform(-60, 60), 5), round(rnd.uniform(-170, 170), 5)) for i in range(500)]
    cols = ["occurrenceID", "scientificName", "taxonGroup", "genus", "locality", "country",
            "decimalLatitude", "decimalLongitude", "earliestAgeOrLowestStage", "latestAgeOrHighestStage",
            "earliestChronometricAge", "latestChronometricAge", "minimumPaleodepthInMeters",
            "maximumPaleodepthInMeters", "depositionalEnvironment", "preservationMode",
            "individualCount", "associatedReferences", "collector"]
    with open(out, "w", newline="", encoding="utf-8") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(cols)
        for i in range(rows):
            g = rnd.choice(GENERA)
            site = rnd.choice(sites)
            k = rnd.randrange(len(STAGES))
            e = STAGES[k]
            l = STAGES[min(k + rnd.randrange(2), len(STAGES) - 1)]
            ema = lma = ""
            if i % 7 == 0:
                ema, lma = "%.1f" % rnd.uniform(80, 84), "%.1f" % rnd.uniform(72, 79)
                e, l = "", ""
            dmin = dmax = env = ""
            if i % 3 == 0:
                env = rnd.choice(ENVS)
            else:
                a = rnd.randrange(0, 800)
                dmin, dmax = str(a), str(a + rnd.randrange(0, 200))
            w.writerow(["B%d" % i, "%s %s" % (g, rnd.choice(EPITHETS)), "Crinoidea", g, site[0], site[1],
                        site[2], site[3], e, l, ema, lma, dmin, dmax, env, rnd.choice(PRES),
                        rnd.randrange(1, 20), "Ref%03d" % rnd.randrange(300), "Collector %d" % rnd.randrange(40)])


if __name__ == "__main__":
    main()
