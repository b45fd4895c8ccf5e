#!/usr/bin/env bash
# A private PostgreSQL cluster for Blockbell: Debian's server binaries, a data folder of our own,
# listening on 127.0.0.1 only, at a non-default port. Started as the unprivileged `postgres` user when
# run by root (initdb refuses to run as root).
#
#   pg_setup <base-dir> <port>   installs PostgreSQL when missing, creates the cluster once, starts it
#   pg_create_db <name>          creates a database when missing
#   pg_stop                      stops the cluster started by pg_setup
# After pg_setup: PG_BASE, PG_PORT, PG_USER, PG_PASSWORD are set.

pg_bin_dir() {
  local d
  d=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -1)
  [ -n "$d" ] && [ -x "$d/initdb" ] && echo "$d"
}

pg_run() {
  # Runs a PostgreSQL tool as the cluster owner.
  if as_root; then runuser -u postgres -- "$@"; else "$@"; fi
}

pg_reachable_base() {
  # The data folder must be reachable by the `postgres` user through every parent folder.
  # Falls back to a folder under /var/tmp when the checkout's parents are closed to it.
  local wanted=$1
  mkdir -p "$wanted"
  if ! as_root || runuser -u postgres -- test -x "$wanted" 2>/dev/null; then echo "$wanted"; return; fi
  local key; key=$(printf '%s' "$wanted" | md5sum | cut -c1-10)
  echo "/var/tmp/blockbell-pg-$key"
}

pg_setup() {
  local wanted=$1
  PG_PORT=$2
  PG_USER=blockbell
  PG_BIN=$(pg_bin_dir)
  if [ -z "$PG_BIN" ]; then
    log "PostgreSQL is not installed: installing Debian's postgresql package..."
    apt_install postgresql
    PG_BIN=$(pg_bin_dir) || die "PostgreSQL binaries not found after install"
  fi
  PG_BASE=$(pg_reachable_base "$wanted")
  mkdir -p "$PG_BASE"
  [ "$PG_BASE" != "$wanted" ] && log "Data folder parents are not reachable by user postgres; using $PG_BASE"
  if [ ! -f "$PG_BASE/password" ]; then random_secret > "$PG_BASE/password"; fi
  PG_PASSWORD=$(cat "$PG_BASE/password")
  mkdir -p "$PG_BASE/sock"
  if [ ! -f "$PG_BASE/data/PG_VERSION" ]; then
    log "Creating a private PostgreSQL cluster in $PG_BASE/data"
    rm -rf "$PG_BASE/data"; mkdir -p "$PG_BASE/data"
    as_root && chown -R postgres:postgres "$PG_BASE"
    chmod 700 "$PG_BASE/data"
    pg_run "$PG_BIN/initdb" -D "$PG_BASE/data" -U "$PG_USER" --pwfile="$PG_BASE/password" \
      --auth-local=trust --auth-host=scram-sha-256 -E UTF8 --locale=C.UTF-8 >"$PG_BASE/initdb.log" 2>&1 \
      || { cat "$PG_BASE/initdb.log"; die "initdb failed"; }
  fi
  as_root && chown -R postgres:postgres "$PG_BASE"
  if pg_run "$PG_BIN/pg_ctl" -D "$PG_BASE/data" status >/dev/null 2>&1; then
    log "PostgreSQL already running in $PG_BASE"
  else
    port_free "$PG_PORT" || die "Port $PG_PORT is taken; set BLOCKBELL_DB_PORT to a free port."
    pg_run "$PG_BIN/pg_ctl" -D "$PG_BASE/data" -l "$PG_BASE/server.log" -w -t 30 \
      -o "-c listen_addresses=127.0.0.1 -c port=$PG_PORT -c unix_socket_directories=$PG_BASE/sock ${PG_EXTRA_OPTS:-}" start >/dev/null \
      || { tail -20 "$PG_BASE/server.log"; die "PostgreSQL did not start"; }
    PG_STARTED=1
    log "PostgreSQL listening on 127.0.0.1:$PG_PORT"
  fi
}

pg_create_db() {
  local name=$1
  if ! pg_run "$PG_BIN/psql" -h "$PG_BASE/sock" -p "$PG_PORT" -U "$PG_USER" -d postgres -tAc \
      "SELECT 1 FROM pg_database WHERE datname='$name'" | grep -q 1; then
    pg_run "$PG_BIN/createdb" -h "$PG_BASE/sock" -p "$PG_PORT" -U "$PG_USER" "$name" || die "createdb $name failed"
  fi
}

pg_stop() {
  [ -n "${PG_BIN:-}" ] && [ -n "${PG_BASE:-}" ] || return 0
  pg_run "$PG_BIN/pg_ctl" -D "$PG_BASE/data" -m fast -w stop >/dev/null 2>&1 && log "PostgreSQL stopped"
  return 0
}

# The app's own database for npm start and the two-server trial: a cluster under <dir>/pg on <port>, the
# database `blockbell` migrated and seeded with the demo, its settings exported for the server, and the
# session secret kept in <dir>/session-secret (unless NUXT_SESSION_PASSWORD is set).
start_app_database() {
  local dir=$1 port=$2
  pg_setup "$dir/pg" "$port"
  pg_create_db blockbell
  export BLOCKBELL_DB_HOST=127.0.0.1 BLOCKBELL_DB_PORT="$PG_PORT" BLOCKBELL_DB_NAME=blockbell \
         BLOCKBELL_DB_USER="$PG_USER" BLOCKBELL_DB_PASSWORD="$PG_PASSWORD"
  if [ -z "${NUXT_SESSION_PASSWORD:-}" ]; then
    [ -f "$dir/session-secret" ] || { random_secret > "$dir/session-secret"; chmod 600 "$dir/session-secret"; }
    NUXT_SESSION_PASSWORD=$(cat "$dir/session-secret")
    export NUXT_SESSION_PASSWORD
  fi
  ./node_modules/.bin/tsx server/database/cli.ts up
  ./node_modules/.bin/tsx server/database/cli.ts seed
}
