#!/usr/bin/env bash
# Installs and starts everything Blockbell needs, with demo data: `npm start`.
# PostgreSQL (a private cluster under .data/), migrations, demo data, the built server.
# Ctrl-C stops every process this script started, PostgreSQL included.
set -euo pipefail
cd "$(dirname "$0")/.."
. scripts/lib/common.sh
. scripts/lib/postgres.sh

WEB_PORT=${PORT:-3000}
MQTT_PORT=${MQTT_PORT:-18830}
DB_PORT=${BLOCKBELL_DB_PORT:-54329}
SMTP_PORT=${FAKE_SMTP_PORT:-2525}
DATA_DIR="$PWD/.data"
mkdir -p "$DATA_DIR"

ensure_node_modules
port_free "$WEB_PORT" || die "Port $WEB_PORT is taken (another Blockbell?). Stop it, or start with PORT=<free port> npm start."
[ -n "${MQTT_URL:-}" ] || port_free "$MQTT_PORT" || die "MQTT port $MQTT_PORT is taken. Stop what uses it, or start with MQTT_PORT=<free port> npm start."
[ -n "${SMTP_URL:-}" ] || port_free "$SMTP_PORT" || die "Mail port $SMTP_PORT is taken. Stop what uses it, or start with FAKE_SMTP_PORT=<free port> npm start."

SERVER_PID=
FAKE_PID=
SMTP_PID=
cleanup() {
  local rc=$?
  set +e # stop everything even when a process has already gone (Ctrl-C reaches them all)
  trap - INT TERM EXIT
  if [ -n "$FAKE_PID" ]; then kill -TERM "$FAKE_PID" 2>/dev/null; log "Fake layout stopped"; fi
  if [ -n "$SERVER_PID" ] && kill -0 "$SERVER_PID" 2>/dev/null; then
    kill -TERM "$SERVER_PID" 2>/dev/null || true
    for _ in $(seq 1 20); do kill -0 "$SERVER_PID" 2>/dev/null || break; sleep 0.2; done
    kill -KILL "$SERVER_PID" 2>/dev/null || true
    log "Server stopped"
  fi
  if [ -n "$SMTP_PID" ]; then kill -TERM "$SMTP_PID" 2>/dev/null; log "Fake mail server stopped"; fi
  [ "${PG_STARTED:-0}" = 1 ] && pg_stop
  exit "$rc"
}
trap 'exit 130' INT TERM
trap cleanup EXIT

start_app_database "$DATA_DIR" "$DB_PORT"

log "Building the app (nuxt build)..."
./node_modules/.bin/nuxt build > "$DATA_DIR/build.log" 2>&1 || { tail -30 "$DATA_DIR/build.log"; die "nuxt build failed (full log: .data/build.log)"; }

# Without SMTP_URL, mail goes to a local fake mail server that keeps every message under .data/mail.
if [ -z "${SMTP_URL:-}" ]; then
  start_fake_smtp "$SMTP_PORT" "$DATA_DIR/mail" "$DATA_DIR/fake-smtp.log"
  SMTP_PID=$FAKE_SMTP_PID
  log "Fake mail server on 127.0.0.1:$SMTP_PORT (messages kept in .data/mail; log: .data/fake-smtp.log)"
fi

# Demo mode: the embedded broker also lets anonymous MQTT clients in (tools such as mosquitto_pub).
# HOST=0.0.0.0 serves the tablets on the local network too (README: plain http and https on a LAN).
BLOCKBELL_DEMO=1 MQTT_PORT="$MQTT_PORT" FAKE_SMTP_PORT="$SMTP_PORT" HOST="${HOST:-127.0.0.1}" PORT="$WEB_PORT" sh -c 'exec node .output/server/index.mjs' &
SERVER_PID=$!
wait_for_http "http://127.0.0.1:$WEB_PORT/api/health" 60 || die "The server did not answer on port $WEB_PORT"

# The fake layout stands in for the hardware: trains, detectors and turnouts over MQTT.
BLOCKBELL_FAKE_TURNOUT_MEMORY="$DATA_DIR/fake-layout-turnouts.json" MQTT_URL="${MQTT_URL:-mqtt://127.0.0.1:$MQTT_PORT}" sh -c 'exec ./node_modules/.bin/tsx fake-hardware/index.ts' > "$DATA_DIR/fake-layout.log" 2>&1 &
FAKE_PID=$!
log "Fake layout running (log: .data/fake-layout.log)"

printf '\n  Blockbell is running at http://127.0.0.1:%s\n\n' "$WEB_PORT"
./node_modules/.bin/tsx server/database/cli.ts accounts
printf '\n  Press Ctrl-C to stop everything (server and PostgreSQL).\n\n'
wait "$SERVER_PID" || true
SERVER_PID=
