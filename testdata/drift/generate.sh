#!/bin/sh
# Regenerates trend.txt (apt-get install python3-scipy; Debian's python3,
# not another one on PATH).
set -e
cd "$(dirname "$0")"
/usr/bin/python3 generate.py > trend.txt
