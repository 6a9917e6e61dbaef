#!/usr/bin/env bash
# `npm test`: install what is missing (npm packages; Debian's PostgreSQL server, Chromium, mpmath,
# hdf5-tools, GSL and gcc for the reference checks; make, gfortran, libcurl headers and NumPy for
# examples/), then run every layer's tests through scripts/test.ts against a throw-away PostgreSQL
# cluster. Arguments: test files to run alone.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/ensure-node-deps.sh
bash scripts/ensure-apt.sh \
  '/usr/lib/postgresql/*/bin/initdb=postgresql' \
  '/usr/bin/chromium=chromium' \
  '/usr/lib/python3/dist-packages/mpmath/__init__.py=python3-mpmath' \
  '/usr/bin/h5dump=hdf5-tools' \
  '/usr/include/gsl/gsl_sf_fermi_dirac.h=libgsl-dev' \
  '/usr/bin/gcc=gcc' \
  '/usr/bin/make=make' \
  '/usr/bin/gfortran=gfortran' \
  '/usr/include/*/curl/curl.h=libcurl4-openssl-dev' \
  '/usr/lib/python3/dist-packages/numpy/__init__.py=python3-numpy' \
  '/usr/share/fonts/truetype/liberation/LiberationSans-Regular.ttf=fonts-liberation'
exec node --import tsx scripts/test.ts "$@"
