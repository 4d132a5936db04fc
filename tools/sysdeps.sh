#!/usr/bin/env bash
# Debian packages that Qt, the virtual screen (Xvfb) and software OpenGL need.
# As root: installs the missing ones.  Otherwise: names them and exits 1.
set -u
PKGS="python3-venv xvfb xauth libxcb-icccm4 libxcb-keysyms1 libxcb-cursor0 libxcb-image0 libxcb-randr0
libxcb-render-util0 libxcb-shape0 libxcb-xfixes0 libxcb-xkb1 libxkbcommon0 libxkbcommon-x11-0 libfontconfig1
libfreetype6 libdbus-1-3 libglib2.0-0 libegl1 libgl1 libopengl0 libgl1-mesa-dri fonts-dejavu-core"
if ! command -v dpkg-query >/dev/null 2>&1; then
    echo "sysdeps: not a Debian/Ubuntu system; install the equivalents of: $(echo $PKGS)" >&2
    exit 0
fi
missing=""
for p in $PKGS; do
    if [ "$p" = python3-venv ] && python3 -c "import ensurepip, venv" >/dev/null 2>&1; then
        continue  # this python3 can make virtual environments already
    fi
    status=$(dpkg-query -W -f='${Status}' "$p" 2>/dev/null || true)
    case "$status" in *"install ok installed"*) ;; *) missing="$missing $p" ;; esac
done
[ -z "$missing" ] && exit 0
if [ "$(id -u)" = 0 ]; then
    echo "sysdeps: installing$missing"
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -qq && apt-get install -y -qq --no-install-recommends $missing >/dev/null \
        || { echo "sysdeps: apt-get failed for:$missing" >&2; exit 1; }
else
    echo "sysdeps: these Debian packages are missing:$missing" >&2
    echo "sysdeps: install them with: sudo apt-get install$missing" >&2
    exit 1
fi
