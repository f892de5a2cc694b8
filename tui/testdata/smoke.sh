#!/usr/bin/env bash
# Smoke test of the dashboard in a real terminal: builds undercool, starts
# `undercool demo` (the SIMULATED melt deck) in a detached tmux session,
# reads the screen, checks the safety line and a temperature are shown,
# waits for the first sample's DONE and checks its verdict (and, unless it
# is a PASS, its advice) is on screen, presses q and checks the program
# has left.
# Usage: tui/testdata/smoke.sh            (from anywhere in the repository)
set -euo pipefail
cd "$(dirname "$0")/../.."
command -v tmux >/dev/null || { echo "smoke: tmux is not installed (apt-get install -y tmux)"; exit 1; }

work=$(mktemp -d)
session="undercool-smoke-$$"
cleanup() { tmux kill-session -t "$session" 2>/dev/null || true; rm -rf "$work"; }
trap cleanup EXIT

go build -o "$work/undercool" ./cmd/undercool

check_screen() { # cols rows
	local cols=$1 rows=$2 screen=""
	tmux new-session -d -s "$session" -x "$cols" -y "$rows" \
		"cd '$work' && NO_COLOR= ./undercool demo --speed 20 --data '$work/data'; echo UNDERCOOL-EXITED \$?; sleep 30"
	for _ in $(seq 1 40); do
		sleep 0.5
		screen=$(tmux capture-pane -p -t "$session")
		if grep -q "Molten metal" <<<"$screen" && grep -Eq "RECORDING|FREEZING|DONE" <<<"$screen"; then
			break
		fi
	done
	echo "---- screen at ${cols}x${rows}"
	echo "$screen"
	grep -q "Molten metal" <<<"$screen" || { echo "smoke: the safety line is not on screen"; exit 1; }
	grep -Eq "[0-9]{3,4}│" <<<"$screen" || { echo "smoke: no temperature axis on screen"; exit 1; }
	grep -q "█" <<<"$screen" || { echo "smoke: no big reading on screen"; exit 1; }
	# the first sample's verdict: the state line says it in words
	# ("MARGINAL · DONE 212 s …"), the reasons (•) and advice (→) follow
	local done=""
	for _ in $(seq 1 120); do
		sleep 0.5
		done=$(tmux capture-pane -p -t "$session")
		if grep -Eq "(PASS|MARGINAL|FAIL|INVALID · RE-SAMPLE|NO LIMITS SET) · DONE" <<<"$done"; then
			break
		fi
	done
	echo "---- DONE at ${cols}x${rows}"
	echo "$done"
	grep -Eq "(PASS|MARGINAL|FAIL|INVALID · RE-SAMPLE|NO LIMITS SET) · DONE" <<<"$done" || { echo "smoke: no verdict on screen at DONE"; exit 1; }
	if ! grep -q "PASS · DONE" <<<"$done"; then
		grep -Eq "^→ |→ [A-Z]" <<<"$done" || { echo "smoke: the verdict's advice is not on screen at DONE"; exit 1; }
	fi
	# q quits at once unless a sample is recording; then it asks, y confirms.
	tmux send-keys -t "$session" q
	sleep 0.5
	if tmux capture-pane -p -t "$session" | grep -q "Quit anyway"; then
		tmux send-keys -t "$session" y
	fi
	for _ in $(seq 1 20); do
		sleep 0.5
		if tmux capture-pane -p -t "$session" | grep -q "UNDERCOOL-EXITED 0"; then
			tmux kill-session -t "$session"
			echo "smoke: ${cols}x${rows} ok"
			return 0
		fi
	done
	tmux capture-pane -p -t "$session"
	echo "smoke: undercool did not exit cleanly after q"
	exit 1
}

check_screen 80 24
check_screen 120 40
grep -q "sample started" "$work/data/undercool.log" || { echo "smoke: the log file has no sample"; exit 1; }
echo "smoke: all ok"
