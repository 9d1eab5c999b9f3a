# heatpath service image: API (`node dist/services/api/main.js`), workers
# (`node dist/workers/main.js`) or both (`node dist/services/main.js`, the default).

# ---- build: compile TypeScript with the dev dependencies ----
FROM node:20-slim AS build
WORKDIR /app
COPY package.json package-lock.json ./
# Scripts off: `prepare` would build before the sources are copied.
RUN npm ci --ignore-scripts
COPY tsconfig.json tsconfig.build.json ./
COPY shared ./shared
COPY services ./services
COPY workers ./workers
RUN npm run build

# ---- runtime: production dependencies and the compiled code only ----
FROM node:20-slim AS runtime
ENV NODE_ENV=production \
    HOST=0.0.0.0 \
    PORT=8080 \
    HEATPATH_DATA_DIR=/data
WORKDIR /app
COPY package.json package-lock.json ./
RUN npm ci --omit=dev --ignore-scripts && npm cache clean --force
COPY --from=build /app/dist ./dist
# The store volume is mounted here; a new named volume takes this owner.
RUN groupadd --system heatpath && useradd --system --gid heatpath --home-dir /app heatpath \
    && mkdir -p /data && chown heatpath:heatpath /data
USER heatpath
VOLUME ["/data"]
EXPOSE 8080
# /health/ready (Redis and a writable store with room) where the container runs the API; a worker-only
# container (`node dist/workers/main.js`) has no HTTP port and is reported healthy (see the script).
HEALTHCHECK --interval=15s --timeout=4s --start-period=10s --retries=3 \
  CMD ["node", "dist/services/container-health-check.js"]
CMD ["node", "dist/services/main.js"]
