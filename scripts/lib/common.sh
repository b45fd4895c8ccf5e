#!/usr/bin/env bash
# Shared shell helpers for Blockbell's start and test scripts.
# Every function here is idempotent: running a script twice does no harm.

log() { printf '\033[1;33m[blockbell]\033[0m %s\n' "$*"; }
die() { printf '\033[1;31m[blockbell] %s\033[0m\n' "$*" >&2; exit 1; }

as_root() { [ "$(id -u)" = 0 ]; }

apt_updated=0
apt_install() {
  # apt_install <package>... : installs Debian packages (root only), once per run.
  as_root || die "Missing Debian packages: $* (run as root, or install them yourself)."
  if [ $apt_updated = 0 ]; then apt-get update -qq >/dev/null 2>&1 || true; apt_updated=1; fi
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "$@" >/dev/null || die "apt-get install $* failed"
}

ensure_node_modules() {
  # Installs npm dependencies from the lock file when missing or older than the lock file.
  if [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
    log "Installing npm dependencies (npm ci)..."
    npm ci --no-audit --no-fund || die "npm ci failed"
  fi
}

ensure_test_packages() {
  # Debian's chromium (browser tests), mosquitto + mosquitto_pub (MQTT interoperability tests), poppler-utils.
  local missing=()
  command -v chromium >/dev/null 2>&1 || missing+=(chromium fonts-dejavu-core)
  command -v mosquitto >/dev/null 2>&1 || [ -x /usr/sbin/mosquitto ] || missing+=(mosquitto)
  command -v mosquitto_pub >/dev/null 2>&1 || missing+=(mosquitto-clients)
  # pdftoppm: the printed wiring schedule's PDF pages as pictures, to look at
  command -v pdftoppm >/dev/null 2>&1 || missing+=(poppler-utils)
  [ ${#missing[@]} = 0 ] || { log "Installing Debian packages for the tests: ${missing[*]}"; apt_install "${missing[@]}"; }
}

port_free() { ! (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }

wait_for_http() {
  # wait_for_http <url> <seconds>
  local url=$1 n=$2
  for _ in $(seq 1 $((n * 4))); do
    curl -s -o /dev/null "$url" && return 0
    sleep 0.25
  done
  return 1
}

random_secret() { head -c 48 /dev/urandom | base64 | tr -d '/+=\n' | head -c 48; }

start_fake_smtp() {
  # start_fake_smtp <port> <folder> <log file>: the local fake mail server (scripts/fake-smtp.ts) in the
  # background; sets FAKE_SMTP_PID and waits until it listens.
  local port=$1 dir=$2 logfile=$3
  mkdir -p "$dir"
  sh -c 'exec ./node_modules/.bin/tsx scripts/fake-smtp.ts --port "$1" --dir "$2"' fake-smtp "$port" "$dir" > "$logfile" 2>&1 &
  FAKE_SMTP_PID=$!
  for _ in $(seq 1 80); do
    port_free "$port" || return 0
    kill -0 "$FAKE_SMTP_PID" 2>/dev/null || { tail -20 "$logfile"; die "the fake mail server did not start"; }
    sleep 0.25
  done
  die "the fake mail server did not answer on port $port"
}
