#!/usr/bin/env bash
# Installs the Debian packages fitproof needs to build, test and render the
# example. As root it runs apt-get; otherwise it prints the exact command
# and stops, so that nothing is installed behind the user's back.
set -eu
packages=(
    build-essential pkg-config
    libgsl-dev libyaml-dev libjansson-dev libcmocka-dev libcmark-dev libssl-dev
    libxml2-utils openssl
    libsqlite3-dev sqlite3 libpq-dev postgresql libgmp-dev libzip-dev libxml2-dev
    librsvg2-bin locales-all
    chromium poppler-utils
    pandoc # optional for users (docx, pdf); installed so that the tests run its present branch
)
missing=()
for package in "${packages[@]}"; do
    dpkg-query -W -f='${Status}' "$package" 2>/dev/null | grep -q "install ok installed" ||
        missing+=("$package")
done
if [ ${#missing[@]} -eq 0 ]; then
    echo "fitproof: all build and test packages are installed"
    exit 0
fi
command="apt-get install -y --no-install-recommends ${missing[*]}"
if [ "$(id -u)" -ne 0 ]; then
    echo "fitproof: missing Debian packages: ${missing[*]}" >&2
    echo "Run as root:  apt-get update && $command" >&2
    exit 1
fi
export DEBIAN_FRONTEND=noninteractive
apt-get update
$command
