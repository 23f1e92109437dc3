#!/usr/bin/env bash
# SPDX-License-Identifier: GPL-3.0-or-later
# Installs the Debian packages mteplan needs to build and test, only those
# that are missing. Sourced by build-aux/run and build-aux/test.

MTEPLAN_DEB_PACKAGES=(
  gcc meson ninja-build pkg-config gettext python3
  libglib2.0-dev libglib2.0-bin libgtk-4-dev libgsl-dev libjson-glib-dev
  libcairo2-dev libpango1.0-dev
  xvfb xauth poppler-utils desktop-file-utils appstream
  yelp-tools itstool fonts-dejavu-core dbus-x11 at-spi2-core
  locales valgrind groff-base libxml2-utils
)

mteplan_install_deps() {
  local missing=() p
  for p in "${MTEPLAN_DEB_PACKAGES[@]}" "$@"; do
    if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed'; then
      missing+=("$p")
    fi
  done
  if [ ${#missing[@]} -eq 0 ]; then
    return 0
  fi
  echo "Installing missing Debian packages: ${missing[*]}"
  local sudo=""
  if [ "$(id -u)" -ne 0 ]; then
    sudo="sudo"
  fi
  export DEBIAN_FRONTEND=noninteractive
  $sudo apt-get update -qq || return 1
  $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}" || return 1
}

# The translation tests run mteplan-cli under de_DE.UTF-8 (German messages
# and decimal commas). Generates that locale when it is missing (needs the
# locales package and root); the tests fall back to C.UTF-8 without it.
mteplan_generate_locales() {
  if locale -a 2>/dev/null | grep -qiE '^de_DE\.utf-?8$'; then
    return 0
  fi
  command -v localedef >/dev/null 2>&1 || return 1
  local sudo=""
  if [ "$(id -u)" -ne 0 ]; then
    sudo="sudo -n"
  fi
  $sudo localedef -i de_DE -f UTF-8 de_DE.UTF-8 2>/dev/null
}
