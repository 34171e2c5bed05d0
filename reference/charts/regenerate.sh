#!/bin/sh
# regenerate.sh - rebuilds reference/charts/*.tsv from the ICS SKOS releases
# with the project's own loader. Run from the project root after `make`:
#   sh reference/charts/regenerate.sh [REFERENCE_DATA_DIR]
set -eu
R=${1:-${BC_SHARED_DIR:-../shared}/reference-data}
BC=${BC_PROGRAM:-build/bathychron}
CITE='Cohen, K.M., Finney, S.C., Gibbard, P.L. & Fan, J.-X. (2013; updated) The ICS International Chronostratigraphic Chart. Episodes 36: 199-204'
$BC timescale convert "$R/ics-chart-2024-12.skos.rdf" --name ics-2024-12 \
	--source "$CITE; chart version 2024-12; (c) International Commission on Stratigraphy, 2024. Data: ICS chart data release 2024-12 (https://stratigraphy.org/chart), SKOS RDF/XML ics-chart-2024-12.skos.rdf, converted by bathychron" \
	--licence "CC BY 4.0 (https://creativecommons.org/licenses/by/4.0/), (c) International Commission on Stratigraphy" \
	> reference/charts/ics-2024-12.tsv
$BC timescale convert "$R/ics-chart-2020.skos.rdf" --name ics-2020 \
	--source "$CITE; chart version 2020/01. Data: CGI/IUGS Geologic Timescale vocabulary gts2020 (http://resource.geosciml.org/vocabulary/timescale/gts2020), SKOS RDF/XML ics-chart-2020.skos.rdf, converted by bathychron; colours from the ICS chart 2024-12 (CC BY 4.0, (c) International Commission on Stratigraphy)" \
	--licence "CC0 (vocabulary); colours CC BY 4.0, (c) International Commission on Stratigraphy" \
	--colours-from reference/charts/ics-2024-12.tsv --colour-source "ICS 2024-12 chart colours" \
	> reference/charts/ics-2020.tsv
