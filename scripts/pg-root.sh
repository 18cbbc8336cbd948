#!/bin/sh
# Prints the folder where the project's private PostgreSQL keeps its cluster (PG_ROOT for
# scripts/pg.sh). The project's own .pg/ when the server can reach it; but when running as
# root the server runs as the postgres user, who cannot enter a project cloned under a
# private home folder (/root/varroute): then a per-project folder under /var/lib/varroute
# (or the temporary folder when /var/lib is not writable), named from the project's path.
# usage: scripts/pg-root.sh [project folder]        env: PG_ROOT (printed as is when set)
set -eu
ROOT=${1:-$(cd "$(dirname "$0")/.." && pwd)}
if [ -n "${PG_ROOT:-}" ]; then
  echo "$PG_ROOT"
  exit 0
fi
# Not root: the server runs as this user, who can reach the project. Root: only when the
# postgres user can enter the project folder (every parent traversable).
if [ "$(id -u)" != 0 ] || (cd / && runuser -u postgres -- test -x "$ROOT") 2>/dev/null; then
  echo "$ROOT/.pg"
  exit 0
fi
key=$(printf '%s' "$ROOT" | sha256sum | cut -c1-16)
for base in /var/lib/varroute "${TMPDIR:-/tmp}/varroute"; do
  if mkdir -p "$base" 2>/dev/null && chmod 755 "$base" 2>/dev/null; then
    echo "$base/pg-$key"
    exit 0
  fi
done
echo "pg-root.sh: no folder the postgres user can reach for the cluster" >&2
exit 1
