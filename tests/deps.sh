#!/bin/sh
# deps.sh PKGCONFIG_NAMES DEBIAN_PACKAGES
# Checks each pkg-config dependency and each tool package; on Debian as
# root installs what is missing with apt-get, otherwise prints the exact
# install line and stops.
set -u
pcs=$1
debs=$2
missing=""
for p in $debs; do
	dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing="$missing $p"
done
if [ -z "$missing" ]; then
	for p in $pcs; do
		pkg-config --exists "$p" 2>/dev/null || { echo "deps: pkg-config cannot find $p" >&2; missing="x"; }
	done
	[ -z "$missing" ] && exit 0
fi
if [ -f /etc/debian_version ] && [ "$(id -u)" = 0 ]; then
	echo "deps: installing:$missing"
	export DEBIAN_FRONTEND=noninteractive
	apt-get update -qq >/dev/null && apt-get install -y -qq $debs >/dev/null || {
		echo "deps: apt-get install failed" >&2; exit 3; }
	exit 0
fi
echo "deps: missing:$missing" >&2
echo "deps: install them with:" >&2
echo "  sudo apt-get install -y $debs" >&2
exit 3
