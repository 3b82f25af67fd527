#!/usr/bin/env bash
# add-worker.sh: turn a spare machine into an fvsweep worker in one command.
#
#   deploy/add-worker.sh HOST [--nats URL] [--token-file F] [--user NAME]
#                             [--binary PATH] [--slots N]
#
# HOST is anything ssh accepts (user@host, an alias of ~/.ssh/config). The
# account there needs sudo. The script copies the fvsweep binary, the worker
# unit and an environment file to HOST, installs them, and starts the
# worker; it prints the unit's state at the end.
#
#   --nats URL        NATS URL(s), comma-separated (default: $FVSWEEP_NATS)
#   --token-file F    file holding the worker token (default: $FVSWEEP_TOKEN)
#   --user NAME       NATS user (default: worker; "" for the embedded server
#                     of "fvsweep serve", which takes the bare token)
#   --binary PATH     the fvsweep binary to copy (default: build one from this
#                     checkout, static, for linux/amd64 or $GOARCH)
#   --slots N         jobs at once on HOST, 1 to 256 (default: its number of
#                     cores); --concurrency N, its old name, still works with
#                     a warning
set -euo pipefail

here="$(cd "$(dirname "$0")" && pwd)"
die() { echo "add-worker: $*" >&2; exit 1; }

# set_slots FLAG VALUE sets slots to VALUE without leading zeros if it is a
# whole number from 1 to 256 (the range "fvsweep worker --slots" takes), and
# dies naming FLAG otherwise.
set_slots() {
	local n="$2"
	case "$n" in '' | *[!0-9]*) die "$1 $2: want a whole number from 1 to 256" ;; esac
	while [ "${n#0}" != "$n" ]; do n="${n#0}"; done
	{ [ -n "$n" ] && [ ${#n} -le 3 ] && [ "$n" -le 256 ]; } || die "$1 $2: want a whole number from 1 to 256"
	slots="$n"
}

[ $# -ge 1 ] || die "usage: add-worker.sh HOST [--nats URL] [--token-file F] [--user NAME] [--binary PATH] [--slots N]"
host="$1"; shift
case "$host" in -*) die "first argument must be the host, got $host" ;; esac

nats="${FVSWEEP_NATS:-}"
token="${FVSWEEP_TOKEN:-}"
user="worker"
binary=""
slots=""
while [ $# -gt 0 ]; do
	case "$1" in
	--nats) [ $# -ge 2 ] || die "--nats needs a URL"; nats="$2"; shift 2 ;;
	--token-file)
		[ $# -ge 2 ] || die "--token-file needs a file"
		[ -r "$2" ] || die "--token-file $2: cannot read it"
		token="$(tr -d ' \t\r\n' <"$2")"; shift 2 ;;
	--user) [ $# -ge 2 ] || die "--user needs a name"; user="$2"; shift 2 ;;
	--binary) [ $# -ge 2 ] || die "--binary needs a path"; binary="$2"; shift 2 ;;
	--slots | --concurrency)
		[ $# -ge 2 ] || die "$1 needs a number"
		[ "$1" = --slots ] || echo "add-worker: warning: $1 is deprecated; use --slots" >&2
		set_slots "$1" "$2"; shift 2 ;;
	*) die "unknown option $1" ;;
	esac
done
[ -n "$nats" ] || die "no NATS URL: pass --nats URL or set FVSWEEP_NATS"
[ -n "$token" ] || die "no worker token: pass --token-file F or set FVSWEEP_TOKEN"

work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
umask 077

if [ -z "$binary" ]; then
	echo "add-worker: building fvsweep (static)" >&2
	(cd "$here/.." && CGO_ENABLED=0 GOOS=linux GOARCH="${GOARCH:-amd64}" go build -trimpath -o "$work/fvsweep" ./cmd/fvsweep)
	binary="$work/fvsweep"
fi
[ -x "$binary" ] || die "--binary $binary: not an executable file"
# The remote side installs $stage/fvsweep, whatever the local file is called.
[ "$binary" = "$work/fvsweep" ] || cp "$binary" "$work/fvsweep"

{
	echo "# written by add-worker.sh on $(date -u +%Y-%m-%dT%H:%M:%SZ)"
	echo "FVSWEEP_NATS=$nats"
	[ -z "$user" ] || echo "FVSWEEP_USER=$user"
	echo "FVSWEEP_TOKEN=$token"
} >"$work/fvsweep.env"

unit="$work/fvsweep-worker.service"
if [ -n "$slots" ]; then
	sed "s|^ExecStart=/usr/local/bin/fvsweep worker\$|& --slots $slots|" \
		"$here/systemd/fvsweep-worker.service" >"$unit"
else
	cp "$here/systemd/fvsweep-worker.service" "$unit"
fi

stage="/tmp/fvsweep-add-worker.$$"
echo "add-worker: copying to $host" >&2
ssh "$host" "mkdir -m 700 -p $stage"
scp -q "$work/fvsweep" "$unit" "$work/fvsweep.env" "$host:$stage/"
ssh "$host" "sudo sh -euc '
	install -m 0755 $stage/fvsweep /usr/local/bin/fvsweep
	install -m 0644 $stage/fvsweep-worker.service /etc/systemd/system/fvsweep-worker.service
	install -d -m 0755 /etc/fvsweep
	install -m 0600 $stage/fvsweep.env /etc/fvsweep/fvsweep.env
	rm -rf $stage
	systemctl daemon-reload
	systemctl enable fvsweep-worker.service
	systemctl restart fvsweep-worker.service
	sleep 2
	systemctl is-active fvsweep-worker.service
'" || die "installing on $host failed (see above); 'ssh $host journalctl -u fvsweep-worker' says why"
echo "add-worker: $host runs fvsweep-worker; 'fvsweep status' lists it within a few seconds" >&2
