#!/bin/sh
# test_readme.sh - every example in README.md runs and prints what it shows.
. "$(dirname "$0")/setup.sh"
/usr/bin/python3 "$TOP/tests/cli/readme_examples.py"
