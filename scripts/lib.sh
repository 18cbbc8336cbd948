# Shared set-up for scripts/start.sh and scripts/test.sh (sourced, POSIX sh).
# Installs what is missing, brings up every local service the app needs, and stops
# them all again on exit or Ctrl-C.
set -eu

ROOT=$(cd "$(dirname "$0")/.." && pwd)
cd "$ROOT"
export PG_PORT=${PG_PORT:-54329}
export PG_BIN=${PG_BIN:-/usr/lib/postgresql/15/bin}
# Where the private PostgreSQL keeps its data (scripts/pg-root.sh: .pg/ in the project, or
# a folder the postgres user can reach when running as root in a private home folder).
PG_ROOT=$(sh "$ROOT/scripts/pg-root.sh" "$ROOT")
export PG_ROOT
RUN_DIR=$ROOT/.run
mkdir -p "$RUN_DIR"

say() { printf '\033[1;32m[varroute]\033[0m %s\n' "$*"; }
fail() { printf '\033[1;31m[varroute]\033[0m %s\n' "$*" >&2; exit 1; }

# Debian packages the project needs: PostgreSQL 15 always; Chromium and the document
# tools only for tests. Installed when missing and running as root; otherwise the
# command to run is printed.
ensure_debian_packages() {
  missing=""
  [ -x "$PG_BIN/postgres" ] || missing="$missing postgresql"
  for want in "$@"; do
    case $want in
      chromium) [ -x /usr/bin/chromium ] || missing="$missing chromium" ;;
      poppler-utils) command -v pdftotext >/dev/null 2>&1 || missing="$missing poppler-utils" ;;
      libxml2-utils) command -v xmllint >/dev/null 2>&1 || missing="$missing libxml2-utils" ;;
    esac
  done
  [ -z "$missing" ] && return 0
  if [ "$(id -u)" = 0 ]; then
    say "installing Debian packages:$missing"
    apt-get update -q >/dev/null
    DEBIAN_FRONTEND=noninteractive apt-get install -y -q $missing >/dev/null
  else
    fail "missing Debian packages:$missing — run: sudo apt-get update && sudo apt-get install -y$missing"
  fi
}

# npm ci when node_modules is missing or was installed from another lock file.
ensure_node_modules() {
  stamp=node_modules/.varroute-lock
  want=$(sha256sum package-lock.json | cut -d' ' -f1)
  if [ ! -f "$stamp" ] || [ "$(cat "$stamp")" != "$want" ]; then
    say "installing npm packages (npm ci)"
    npm ci --no-audit --no-fund --loglevel=error
    echo "$want" > "$stamp"
  fi
}

psql_admin() {
  PGPASSWORD=postgres "$PG_BIN/psql" -h 127.0.0.1 -p "$PG_PORT" -U postgres -v ON_ERROR_STOP=1 -qAt "$@"
}

STARTED_PG=""
start_postgres() {
  if sh scripts/pg.sh status >/dev/null 2>&1; then
    say "PostgreSQL already running on 127.0.0.1:$PG_PORT"
  else
    sh scripts/pg.sh start >/dev/null
    STARTED_PG=1
    say "PostgreSQL started on 127.0.0.1:$PG_PORT (data in $PG_ROOT)"
  fi
  tries=0
  until psql_admin -d postgres -c "select 1" >/dev/null 2>&1; do
    tries=$((tries + 1)); [ $tries -gt 60 ] && fail "PostgreSQL does not answer on 127.0.0.1:$PG_PORT"
    sleep 0.5
  done
}

ensure_database() {
  if [ "$(psql_admin -d postgres -c "select 1 from pg_database where datname = '$1'")" != "1" ]; then
    psql_admin -d postgres -c "create database \"$1\""
  fi
}

recreate_database() {
  psql_admin -d postgres -c "drop database if exists \"$1\" with (force)"
  psql_admin -d postgres -c "create database \"$1\""
}

# Waits until a TCP port on 127.0.0.1 accepts connections.
wait_for_port() {
  node -e '
    const [port, name] = process.argv.slice(1); const net = require("node:net"); const until = Date.now() + 60000;
    (function attempt() { const s = net.connect(Number(port), "127.0.0.1");
      s.on("connect", () => { s.end(); process.exit(0); });
      s.on("error", () => { if (Date.now() > until) { console.error(name + " does not answer on port " + port); process.exit(1); } setTimeout(attempt, 250); }); })();
  ' "$1" "$2"
}

# Whether something accepts connections on 127.0.0.1:PORT right now (no waiting).
port_answers() {
  node -e '
    const s = require("node:net").connect(Number(process.argv[1]), "127.0.0.1");
    s.setTimeout(1000, () => process.exit(1));
    s.on("connect", () => { s.end(); process.exit(0); });
    s.on("error", () => process.exit(1));
  ' "$1"
}

# Background services started by this script (logs and pid files in .run/), stopped on exit.
SERVICE_PIDS=""
start_service() { # name port command...
  name=$1; port=$2; shift 2
  "$@" >"$RUN_DIR/$name.log" 2>&1 &
  SERVICE_PIDS="$SERVICE_PIDS $!"
  echo $! >"$RUN_DIR/$name.pid"
  wait_for_port "$port" "$name" || { tail -20 "$RUN_DIR/$name.log" >&2; exit 1; }
  say "$name answering on 127.0.0.1:$port"
}

# A background service without a port (the worker): its pid is recorded so stop_services
# stops it, and it must still be running a moment after the start.
start_background() { # name command...
  name=$1; shift
  "$@" >"$RUN_DIR/$name.log" 2>&1 &
  bg_pid=$!
  SERVICE_PIDS="$SERVICE_PIDS $bg_pid"
  echo "$bg_pid" >"$RUN_DIR/$name.pid"
  sleep 1
  kill -0 "$bg_pid" 2>/dev/null || { tail -20 "$RUN_DIR/$name.log" >&2; fail "$name stopped right after starting (log in .run/$name.log)"; }
  say "$name running (log in .run/$name.log)"
}

# Asks a process to stop, and kills it if it is still there after 5 seconds (the app
# server waits for open database and keep-alive connections before it exits on its own).
stop_process() {
  kill "$1" 2>/dev/null || return 0
  tries=0
  while kill -0 "$1" 2>/dev/null && [ $tries -lt 50 ]; do sleep 0.1; tries=$((tries + 1)); done
  kill -9 "$1" 2>/dev/null || true
}

stop_services() {
  trap '' INT TERM # a second Ctrl-C must not cut the clean-up short
  # Last started, first stopped: the app and the worker before the mail sink they use.
  reversed=""
  for pid in $SERVICE_PIDS; do reversed="$pid $reversed"; done
  for pid in $reversed; do stop_process "$pid"; done
  SERVICE_PIDS=""
  if [ -n "$STARTED_PG" ]; then
    sh scripts/pg.sh stop >/dev/null 2>&1 && say "PostgreSQL stopped" || true
  fi
}

# The local SMTP sink: every e-mail the app sends locally lands here, readable in its web
# UI and through its REST API (tests). Reused when one is already answering on both ports.
MAILDEV_SMTP_PORT=11025
MAILDEV_WEB_PORT=11080
start_maildev() {
  smtp_up=""; web_up=""
  port_answers "$MAILDEV_SMTP_PORT" && smtp_up=1
  port_answers "$MAILDEV_WEB_PORT" && web_up=1
  if [ -n "$smtp_up" ] && [ -n "$web_up" ]; then
    say "mail sink already running (SMTP 127.0.0.1:$MAILDEV_SMTP_PORT, web http://127.0.0.1:$MAILDEV_WEB_PORT)"
    return 0
  fi
  if [ -n "$smtp_up$web_up" ]; then
    fail "port $MAILDEV_SMTP_PORT or $MAILDEV_WEB_PORT is taken by something other than the mail sink; stop it and try again"
  fi
  start_service maildev "$MAILDEV_SMTP_PORT" ./node_modules/.bin/maildev \
    --smtp "$MAILDEV_SMTP_PORT" --ip 127.0.0.1 --web "$MAILDEV_WEB_PORT" --web-ip 127.0.0.1
  wait_for_port "$MAILDEV_WEB_PORT" "maildev web" || { tail -20 "$RUN_DIR/maildev.log" >&2; exit 1; }
  say "mail sink web UI on http://127.0.0.1:$MAILDEV_WEB_PORT"
}

# The local fake Stripe server (scripts/stripe-fake.ts): the API the app calls, a hosted test
# checkout page, and signed webhooks to STRIPE_WEBHOOK_URL. Not started when STRIPE_SECRET_KEY
# is set (the app then talks to Stripe, or to STRIPE_API_HOST). Reused when already answering.
STRIPE_FAKE_PORT=12111
start_stripe_fake() {
  if [ -n "${STRIPE_SECRET_KEY:-}" ]; then
    say "STRIPE_SECRET_KEY is set: card payments go to ${STRIPE_API_HOST:-Stripe}, no fake Stripe server"
    return 0
  fi
  export STRIPE_WEBHOOK_URL=${STRIPE_WEBHOOK_URL:-http://127.0.0.1:${PORT:-3000}/api/stripe/webhook}
  if port_answers "$STRIPE_FAKE_PORT"; then
    say "fake Stripe already running on 127.0.0.1:$STRIPE_FAKE_PORT (its webhook URL is whatever it was started with)"
    return 0
  fi
  STRIPE_FAKE_PORT=$STRIPE_FAKE_PORT start_service stripe-fake "$STRIPE_FAKE_PORT" node --import tsx scripts/stripe-fake.ts
  say "fake Stripe checkout pages on http://127.0.0.1:$STRIPE_FAKE_PORT, webhooks to $STRIPE_WEBHOOK_URL"
}

start_local_services() {
  start_postgres
  start_maildev
  start_stripe_fake
}

# The background worker (e-mail delivery, visit reminders); needs a migrated database.
# Waits until it works its queues, so e-mail sent right after this is delivered.
start_worker() {
  start_background worker node --import tsx scripts/worker.ts
  tries=0
  until grep -q 'working "send-email"' "$RUN_DIR/worker.log" 2>/dev/null; do
    kill -0 "$bg_pid" 2>/dev/null || { tail -20 "$RUN_DIR/worker.log" >&2; fail "the worker stopped (log in .run/worker.log)"; }
    tries=$((tries + 1)); [ $tries -gt 120 ] && { tail -20 "$RUN_DIR/worker.log" >&2; fail "the worker did not start within 60 s"; }
    sleep 0.5
  done
}

knex_cli() {
  node --import tsx ./node_modules/knex/bin/cli.js "$@" --knexfile knexfile.ts
}
