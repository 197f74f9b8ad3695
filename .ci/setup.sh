#!/usr/bin/env bash
# Installs what building and testing teeter needs, when it is missing.
# On Debian or Ubuntu it uses apt-get; elsewhere it says what to install.
set -euo pipefail

# The C libraries fyne's OpenGL driver links against, pkg-config to find them,
# and a virtual X server for the screenshot test.
debs=(gcc pkg-config libgl1-mesa-dev libxcursor-dev libxrandr-dev libxinerama-dev
	libxi-dev libxxf86vm-dev libgl1-mesa-dri xvfb xauth)

if ! command -v go >/dev/null 2>&1; then
	echo "teeter needs Go 1.26 or newer on the PATH (https://go.dev/doc/install)." >&2
	exit 1
fi

missing=()
if command -v dpkg-query >/dev/null 2>&1; then
	for p in "${debs[@]}"; do
		dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
	done
else
	echo "This is not a Debian or Ubuntu system: install the equivalents of" >&2
	echo "  ${debs[*]}" >&2
	echo "with your package manager (fyne's list: https://docs.fyne.io/started/), then run make again." >&2
	exit 1
fi

if [ ${#missing[@]} -gt 0 ]; then
	echo "Installing: ${missing[*]}"
	sudo=""
	[ "$(id -u)" = 0 ] || sudo="sudo"
	$sudo apt-get update -qq
	DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}"
fi

go mod download
