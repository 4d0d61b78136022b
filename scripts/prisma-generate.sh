#!/bin/sh
# Generates the Prisma client offline. Every Prisma CLI command first tries to
# download the native schema engine, which `generate` does not need: point it at
# a harmless executable instead. Quiet on success, the full output on failure.
set -e
out=$(PRISMA_SCHEMA_ENGINE_BINARY=/bin/true PRISMA_HIDE_UPDATE_MESSAGE=1 npx --no-install prisma generate "$@" 2>&1) || {
  echo "$out" >&2
  exit 1
}
