#!/bin/sh
# Generates the Prisma client offline. Every Prisma CLI command first tries to
# download the native schema engine, which `generate` does not need: point it at
# a harmless executable instead.
set -e
PRISMA_SCHEMA_ENGINE_BINARY=/bin/true PRISMA_HIDE_UPDATE_MESSAGE=1 exec npx --no-install prisma generate "$@"
