# Production image of the calibration registry API.
# Build: docker build -t calibration-registry .   (docker compose up does it)

FROM node:20-bookworm-slim AS build
WORKDIR /app
COPY package.json package-lock.json .npmrc ./
RUN npm ci --no-audit --no-fund
COPY tsconfig.json tsconfig.build.json prisma.config.ts ./
COPY prisma ./prisma
COPY scripts ./scripts
COPY libs ./libs
COPY apps ./apps
COPY bench ./bench
RUN npm run build && npm prune --omit=dev

FROM node:20-bookworm-slim AS runtime
# Two malloc arenas keep the resident size down under streaming exports (see README,
# Operating it); npm start uses the same setting.
ENV NODE_ENV=production HOST=0.0.0.0 PORT=3000 MALLOC_ARENA_MAX=2
WORKDIR /app
RUN apt-get update && apt-get install -y --no-install-recommends wget && rm -rf /var/lib/apt/lists/*
COPY --from=build /app/package.json ./
COPY --from=build /app/node_modules ./node_modules
COPY --from=build /app/dist ./dist
COPY --from=build /app/prisma ./prisma
USER node
EXPOSE 3000
HEALTHCHECK --interval=10s --timeout=3s --start-period=20s --retries=5 \
  CMD wget -qO- http://127.0.0.1:3000/health/ready >/dev/null || exit 1
CMD ["node", "--enable-source-maps", "dist/apps/api/src/main.js"]
