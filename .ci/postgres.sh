# Sourced by .ci/run: a throw-away PostgreSQL cluster for the tests that
# read cohorts from a database. pg_start installs Debian's PostgreSQL
# when it is absent, initialises a cluster in a temporary folder, starts
# it on a Unix socket in that folder (no TCP port), creates the database
# riskaudit, loads the demo cohorts (testdata/postgres/load.sh) and
# exports RISKAUDIT_TEST_PGURL; pg_stop stops the server and removes the
# folder. initdb refuses to run as root, so as root the server runs as
# the postgres account the package creates.

pg_bindir() {
  ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1
}

pg_start() {
  if [ -z "$(pg_bindir)" ] || [ ! -x "$(pg_bindir)/initdb" ]; then
    echo "installing postgresql"
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
  fi
  local bin; bin=$(pg_bindir)
  PG_TMP=$(mktemp -d /tmp/riskaudit-pg.XXXXXX)
  chmod 755 "$PG_TMP"
  local as=()
  if [ "$(id -u)" = 0 ]; then
    chown postgres: "$PG_TMP"
    as=(runuser -u postgres --)
  fi
  "${as[@]}" "$bin/initdb" -D "$PG_TMP/data" -U riskaudit -A trust -E UTF8 --no-locale >"$PG_TMP/initdb.log" 2>&1 ||
    { cat "$PG_TMP/initdb.log"; return 1; }
  # The role auditor (testdata/postgres/load.sql) signs in with its
  # password, so that the tests can read one from a password file; every
  # other local connection is trusted.
  printf 'local all auditor scram-sha-256\nlocal all all trust\n' >"$PG_TMP/data/pg_hba.conf"
  "${as[@]}" "$bin/pg_ctl" -D "$PG_TMP/data" -l "$PG_TMP/server.log" -w -t 60 \
    -o "-c listen_addresses='' -k $PG_TMP -p 5432 -c fsync=off -c synchronous_commit=off -c full_page_writes=off" start >/dev/null ||
    { cat "$PG_TMP/server.log"; return 1; }
  PG_STOP=("${as[@]}" "$bin/pg_ctl" -D "$PG_TMP/data" -m fast -w stop)
  export PGHOST="$PG_TMP" PGPORT=5432 PGUSER=riskaudit PGDATABASE=riskaudit
  "$bin/createdb" riskaudit || return 1
  bash testdata/postgres/load.sh || return 1
  export RISKAUDIT_TEST_PGURL="postgresql://riskaudit@/riskaudit?host=$PG_TMP&port=5432"
  unset PGHOST PGPORT PGUSER PGDATABASE
  echo "$("$bin/postgres" --version) on $PG_TMP/.s.PGSQL.5432, demo cohorts loaded"
}

pg_stop() {
  if [ -n "${PG_TMP:-}" ]; then
    "${PG_STOP[@]}" >/dev/null 2>&1 || true
    rm -rf "$PG_TMP"
    PG_TMP=
  fi
}
