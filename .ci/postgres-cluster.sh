#!/usr/bin/env bash
# Starts a throwaway PostgreSQL cluster from Debian's packages for the test suite's server mode,
# as an unprivileged user, listening on 127.0.0.1 only. Prints the admin URL on stdout.
# Usage: url=$(.ci/postgres-cluster.sh [PORT]); stop with: pg_ctl -D "$dir/data" stop (see stderr).
set -euo pipefail
port="${1:-55432}"
# The next free port from there (a cluster left from an earlier run may hold the first).
while (exec 3<>"/dev/tcp/127.0.0.1/$port") 2>/dev/null; do port=$((port + 1)); done
bin="$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -1)"
if [ -z "$bin" ]; then
	echo "postgresql is not installed (apt-get install postgresql)" >&2
	exit 1
fi
dir="$(mktemp -d /tmp/phasewarden-pg-XXXXXX)"
as_owner=()
if [ "$(id -u)" = 0 ]; then
	# PostgreSQL refuses to run as root; Debian's package creates the postgres user.
	chown postgres "$dir"
	as_owner=(runuser -u postgres --)
fi
"${as_owner[@]}" "$bin/initdb" -D "$dir/data" -U phasewarden --auth=trust -E UTF8 --no-locale >/dev/null
# Throwaway data: no fsync, so the suite is not slowed down by a disk it does not test.
"${as_owner[@]}" "$bin/pg_ctl" -D "$dir/data" -l "$dir/log" -w \
	-o "-p $port -k $dir -c listen_addresses=127.0.0.1 -c fsync=off -c synchronous_commit=off -c full_page_writes=off -c max_connections=300" start >/dev/null
echo "postgresql $(basename "$(dirname "$bin")") running in $dir on port $port (stop: ${as_owner[*]} $bin/pg_ctl -D $dir/data stop)" >&2
echo "postgres://phasewarden@127.0.0.1:$port/postgres"
