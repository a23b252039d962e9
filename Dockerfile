# syntax=docker/dockerfile:1
# Almanac API and worker image. The service runs from source under tsx (the
# sandboxed chunk processor loads TypeScript on worker threads), so the image
# carries src/ and the production dependencies; a separate stage type-checks.

FROM node:20-bookworm-slim AS deps
WORKDIR /app
COPY package.json package-lock.json ./
RUN npm ci --omit=dev --no-audit --no-fund

FROM node:20-bookworm-slim AS check
WORKDIR /app
COPY package.json package-lock.json ./
RUN npm ci --no-audit --no-fund
COPY tsconfig.json ./
COPY src ./src
COPY scripts ./scripts
RUN npx tsc -p tsconfig.json --noEmit && touch /app/typechecked

FROM node:20-bookworm-slim AS runtime
WORKDIR /app
# The runtime stage depends on the check stage, so a type error fails the build.
COPY --from=check /app/typechecked /app/.typechecked
COPY --from=deps /app/node_modules ./node_modules
COPY package.json tsconfig.json ./
COPY src ./src
# Files stay owned by root (read-only to the service); the process runs as `node`.
USER node
ENV PORT=8080
EXPOSE 8080
# Same as `npm start`, without npm in between so SIGTERM reaches the process.
# With API_KEYS or API_KEYS_FILE set the API listens on 0.0.0.0; without keys
# it listens on loopback only (unreachable from outside the container).
CMD ["node", "--import", "tsx", "src/server.ts"]
