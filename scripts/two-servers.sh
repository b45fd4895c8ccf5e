#!/usr/bin/env bash
# Two Blockbell processes on one layout, for trying it out: `npm run two-servers`.
# Starts PostgreSQL (the private cluster under .data/, as `npm start`), Debian's mosquitto on loopback as the
# shared broker, two built servers (instances hall-a and hall-b) and the fake layout. Open both addresses:
# one process runs the layout, the other relays it; stop the one that runs it and watch the other take over.
# Ctrl-C stops every process this script started.
set -euo pipefail
cd "$(dirname "$0")/.."
. scripts/lib/common.sh
. scripts/lib/postgres.sh

PORT_A=${PORT:-3000}
PORT_B=${PORT_B:-$((PORT_A + 1))}
BROKER_PORT=${BLOCKBELL_BROKER_PORT:-1883}
DB_PORT=${BLOCKBELL_DB_PORT:-54329}
SMTP_PORT=${FAKE_SMTP_PORT:-2525}
DATA_DIR="$PWD/.data"
mkdir -p "$DATA_DIR/two-servers"

ensure_node_modules
command -v mosquitto >/dev/null || PATH="$PATH:/usr/sbin"
command -v mosquitto >/dev/null || { apt_install mosquitto mosquitto-clients; PATH="$PATH:/usr/sbin"; }
for p in "$PORT_A" "$PORT_B" "$BROKER_PORT" "$SMTP_PORT"; do port_free "$p" || die "Port $p is taken; see the variables at the top of scripts/two-servers.sh."; done

PIDS=()
cleanup() {
  local rc=$?
  set +e
  trap - INT TERM EXIT
  for pid in "${PIDS[@]}"; do kill -TERM "$pid" 2>/dev/null; done
  for pid in "${PIDS[@]}"; do for _ in $(seq 1 25); do kill -0 "$pid" 2>/dev/null || break; sleep 0.2; done; kill -KILL "$pid" 2>/dev/null; done
  [ "${PG_STARTED:-0}" = 1 ] && pg_stop
  exit "$rc"
}
trap 'exit 130' INT TERM
trap cleanup EXIT

start_app_database "$DATA_DIR" "$DB_PORT"
if [ ! -f .output/server/index.mjs ] || [ "${BLOCKBELL_BUILD:-0}" = 1 ]; then
  log "Building the app (nuxt build)..."
  ./node_modules/.bin/nuxt build > "$DATA_DIR/build.log" 2>&1 || { tail -30 "$DATA_DIR/build.log"; die "nuxt build failed"; }
fi

# Loopback only and anonymous: a broker for trying things on this machine, not for a club's network
# (there, give devices and servers their own accounts and keep devices off blockbell-servers/#).
printf 'listener %s 127.0.0.1\nallow_anonymous true\npersistence false\n' "$BROKER_PORT" > "$DATA_DIR/two-servers/mosquitto.conf"
sh -c 'exec mosquitto -c "$1"' _ "$DATA_DIR/two-servers/mosquitto.conf" > "$DATA_DIR/two-servers/mosquitto.log" 2>&1 &
PIDS+=($!)
for _ in $(seq 1 50); do port_free "$BROKER_PORT" || break; sleep 0.1; done
start_fake_smtp "$SMTP_PORT" "$DATA_DIR/mail" "$DATA_DIR/fake-smtp.log"
PIDS+=("$FAKE_SMTP_PID")

export MQTT_URL="mqtt://127.0.0.1:$BROKER_PORT" FAKE_SMTP_PORT="$SMTP_PORT"
for pair in "hall-a:$PORT_A" "hall-b:$PORT_B"; do
  name=${pair%%:*}; port=${pair##*:}
  BLOCKBELL_INSTANCE="$name" BLOCKBELL_DATA_DIR="$DATA_DIR/two-servers/$name" HOST=127.0.0.1 PORT="$port" \
    sh -c 'exec node .output/server/index.mjs' > "$DATA_DIR/two-servers/$name.log" 2>&1 &
  PIDS+=($!)
  wait_for_http "http://127.0.0.1:$port/api/health" 60 || die "$name did not answer on port $port (log: .data/two-servers/$name.log)"
  log "$name: http://127.0.0.1:$port (process $!, log .data/two-servers/$name.log)"
done
sh -c 'exec ./node_modules/.bin/tsx fake-hardware/index.ts' > "$DATA_DIR/two-servers/fake-layout.log" 2>&1 &
PIDS+=($!)

printf '\n  Two Blockbell processes share mosquitto on 127.0.0.1:%s:\n    http://127.0.0.1:%s   http://127.0.0.1:%s\n' "$BROKER_PORT" "$PORT_A" "$PORT_B"
printf '  Which one runs the layout: curl -s http://127.0.0.1:%s/api/health ("layoutsOwned"; an admin signed in sees the slugs)\n\n' "$PORT_A"
./node_modules/.bin/tsx server/database/cli.ts accounts
printf '\n  Press Ctrl-C to stop everything.\n\n'
wait
