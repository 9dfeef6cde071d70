#!/usr/bin/env bash
# Reference tools the tests check against (Debian packages): GDAL, PROJ, segyio, numpy/scipy, PyYAML, Chromium,
# poppler (pdftoppm), and the batch engines the tile tests run on: Slurm with munge, GNU parallel.
set -euo pipefail
need=0
for b in gdalinfo gdal_grid ogrinfo cs2cs chromium parallel sbatch slurmctld munged pdftoppm; do command -v "$b" >/dev/null 2>&1 || need=1; done
/usr/bin/python3 -c 'import numpy, scipy, segyio, osgeo, yaml' >/dev/null 2>&1 || need=1
[ "$need" = 0 ] && exit 0
SUDO=""; [ "$(id -u)" = 0 ] || SUDO="sudo"
export DEBIAN_FRONTEND=noninteractive
$SUDO apt-get update -q
$SUDO apt-get install -y -q -o DPkg::Lock::Timeout=600 \
  gdal-bin python3-gdal proj-bin python3-numpy python3-scipy python3-segyio python3-pyproj python3-yaml chromium \
  slurm-wlm munge parallel poppler-utils
