#!/usr/bin/env bash
# Installs what the tests need, type-checks and lints the tree, and runs every test: `npm test`.
# Starts its own PostgreSQL (a throwaway cluster) and the built server, and tears both down at the end.
# Ends with one summary line: "Blockbell tests: N passed, M failed".
set -uo pipefail
cd "$(dirname "$0")/.."
. scripts/lib/common.sh
. scripts/lib/postgres.sh

ensure_node_modules
ensure_test_packages
export PATH="$PATH:/usr/sbin"

DB_PORT=${BLOCKBELL_TEST_DB_PORT:-54339}
WEB_PORT=${BLOCKBELL_TEST_PORT:-3939}
MQTT_TEST_PORT=${BLOCKBELL_TEST_MQTT_PORT:-18839}
SMTP_TEST_PORT=${BLOCKBELL_TEST_SMTP_PORT:-2539}
RUN_DIR=$(mktemp -d /var/tmp/blockbell-test.XXXXXX)
chmod 755 "$RUN_DIR"
SERVER_PID=
FAKE_SMTP_PID=
cleanup() {
  local rc=$?
  trap - EXIT
  if [ -n "$SERVER_PID" ]; then kill -TERM "$SERVER_PID" 2>/dev/null; wait "$SERVER_PID" 2>/dev/null; fi
  if [ -n "$FAKE_SMTP_PID" ]; then kill -TERM "$FAKE_SMTP_PID" 2>/dev/null; wait "$FAKE_SMTP_PID" 2>/dev/null; fi
  pg_stop
  rm -rf "$RUN_DIR"
  exit "$rc"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

# Type check and lint first: a tree that does not pass them is red before any test runs.
# BLOCKBELL_TEST_SKIP_CHECKS=1 leaves them out of a targeted run.
if [ "${BLOCKBELL_TEST_SKIP_CHECKS:-0}" != 1 ]; then
  log "Type check (nuxt typecheck)..."
  ./node_modules/.bin/nuxt typecheck > "$RUN_DIR/typecheck.log" 2>&1 || { grep -E 'error TS' "$RUN_DIR/typecheck.log" | head -40; tail -5 "$RUN_DIR/typecheck.log"; die "type check failed (npm run typecheck)"; }
  log "Lint (eslint)..."
  ./node_modules/.bin/eslint . > "$RUN_DIR/lint.log" 2>&1 || { tail -60 "$RUN_DIR/lint.log"; die "lint failed (npm run lint; npm run lint:fix fixes most)"; }
fi

port_free "$DB_PORT" || die "Port $DB_PORT is taken; set BLOCKBELL_TEST_DB_PORT to a free port."
port_free "$WEB_PORT" || die "Port $WEB_PORT is taken; set BLOCKBELL_TEST_PORT to a free port."
port_free "$MQTT_TEST_PORT" || die "Port $MQTT_TEST_PORT is taken; set BLOCKBELL_TEST_MQTT_PORT to a free port."
port_free "$SMTP_TEST_PORT" || die "Port $SMTP_TEST_PORT is taken; set BLOCKBELL_TEST_SMTP_PORT to a free port."
PG_EXTRA_OPTS="-c fsync=off -c synchronous_commit=off -c full_page_writes=off" pg_setup "$RUN_DIR/pg" "$DB_PORT"
pg_create_db blockbell_e2e
pg_create_db blockbell_db_tests
pg_create_db blockbell_restart
pg_create_db blockbell_panel_live
pg_create_db blockbell_several
pg_create_db blockbell_fake_start

export BLOCKBELL_DB_HOST=127.0.0.1 BLOCKBELL_DB_PORT="$PG_PORT" BLOCKBELL_DB_USER="$PG_USER" BLOCKBELL_DB_PASSWORD="$PG_PASSWORD"
export BLOCKBELL_DB_TEST_NAME=blockbell_db_tests
export NUXT_SESSION_PASSWORD=$(random_secret)
export BLOCKBELL_TEST_URL="http://127.0.0.1:$WEB_PORT"
export BLOCKBELL_TEST_DATA="$RUN_DIR"
export BLOCKBELL_TEST_MQTT_URL="mqtt://127.0.0.1:$MQTT_TEST_PORT"
# The e2e server believes X-Forwarded-* only from 127.0.0.3 (a stand-in reverse proxy; tests/e2e/transport.test.ts).
export BLOCKBELL_TRUSTED_PROXIES=127.0.0.3
# Uploaded photos go to a folder of this run; tests/e2e/uploads.test.ts looks in it.
export BLOCKBELL_UPLOADS_DIR="$RUN_DIR/uploads"

if [ "${BLOCKBELL_TEST_SKIP_BUILD:-0}" = 1 ] && [ -f .output/server/index.mjs ]; then
  log "Using the existing build in .output (BLOCKBELL_TEST_SKIP_BUILD=1)"
else
  log "Building the app for the end-to-end tests..."
  ./node_modules/.bin/nuxt build > "$RUN_DIR/build.log" 2>&1 || { tail -40 "$RUN_DIR/build.log"; die "nuxt build failed"; }
fi

BLOCKBELL_DB_NAME=blockbell_e2e ./node_modules/.bin/tsx server/database/cli.ts up || die "migrations failed"
BLOCKBELL_DB_NAME=blockbell_e2e ./node_modules/.bin/tsx server/database/cli.ts seed || die "seed failed"
# The tests read what the server mails from the fake mail server's folder, so they always use it.
[ -n "${SMTP_URL:-}" ] && log "SMTP_URL is ignored by the tests: mail goes to the local fake mail server"
unset SMTP_URL
export BLOCKBELL_TEST_MAIL_DIR="$RUN_DIR/mail"
export BLOCKBELL_TEST_SMTP_PORT="$SMTP_TEST_PORT"
start_fake_smtp "$SMTP_TEST_PORT" "$BLOCKBELL_TEST_MAIL_DIR" "$RUN_DIR/fake-smtp.log"
# Short retry waits, so a refused message reaches "failed" within a test (3 attempts: 0.2 s, then 0.4 s apart).
BLOCKBELL_DB_NAME=blockbell_e2e FAKE_SMTP_PORT="$SMTP_TEST_PORT" BLOCKBELL_MAIL_RETRY_MS=200 BLOCKBELL_MAIL_ATTEMPTS=3 \
  BLOCKBELL_PUBLIC_URL="$BLOCKBELL_TEST_URL" MQTT_PORT="$MQTT_TEST_PORT" BLOCKBELL_DATA_DIR="$RUN_DIR/data" HOST=127.0.0.1 PORT="$WEB_PORT" sh -c 'exec node .output/server/index.mjs' > "$RUN_DIR/server.log" 2>&1 &
SERVER_PID=$!
wait_for_http "$BLOCKBELL_TEST_URL/api/health" 60 || { tail -30 "$RUN_DIR/server.log"; die "the test server did not start"; }

./node_modules/.bin/vitest run --reporter=default --reporter=json --outputFile.json="$RUN_DIR/results.json" "$@"
status=$?
if [ -f "$RUN_DIR/results.json" ]; then
  node -e 'const r=require(process.argv[1]); console.log(`\nBlockbell tests: ${r.numPassedTests} passed, ${r.numFailedTests} failed, ${r.numPendingTests + r.numTodoTests} skipped (${r.numTotalTestSuites} suites)`)' "$RUN_DIR/results.json"
else
  echo "Blockbell tests: run did not finish (no results), failed"
fi
[ $status -ne 0 ] && { echo "--- last lines of the server log ---"; tail -20 "$RUN_DIR/server.log"; }
exit $status
