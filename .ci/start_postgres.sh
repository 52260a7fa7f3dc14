#!/usr/bin/env bash
# Start a local PostgreSQL server (Debian package) and create the test database. Idempotent.
set -euo pipefail
version=$(ls /usr/lib/postgresql | sort -V | tail -n 1)
bin=/usr/lib/postgresql/$version/bin
data=/tmp/pacing-pg
if [ ! -d "$data" ]; then
  mkdir -p "$data" && chown postgres:postgres "$data"
  su postgres -c "$bin/initdb -D $data -A trust -U postgres" > /dev/null
fi
if ! su postgres -c "$bin/pg_ctl -D $data status" > /dev/null 2>&1; then
  su postgres -c "$bin/pg_ctl -D $data -l $data/log -o '-k /tmp -h 127.0.0.1 -p 5432' -w start" > /dev/null
fi
psql="psql -h 127.0.0.1 -p 5432 -U postgres -v ON_ERROR_STOP=1 -q"
$psql -tc "SELECT 1 FROM pg_roles WHERE rolname='pacing'" | grep -q 1 || \
  $psql -c "CREATE ROLE pacing LOGIN PASSWORD 'pacing'"
$psql -tc "SELECT 1 FROM pg_database WHERE datname='pacing_test'" | grep -q 1 || \
  $psql -c "CREATE DATABASE pacing_test OWNER pacing"
echo "PostgreSQL $version on 127.0.0.1:5432"
