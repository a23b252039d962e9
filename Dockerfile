# syntax=docker/dockerfile:1
# Almanac API and worker image: the compiled JavaScript (dist/, from
# `npm run build`) and the production dependencies. The build stage installs
# every dependency, then type-checks and compiles src/ (a type error fails the
# image build).

FROM node:20-bookworm-slim AS deps
WORKDIR /app
COPY package.json package-lock.json ./
RUN npm ci --omit=dev --no-audit --no-fund

FROM node:20-bookworm-slim AS build
WORKDIR /app
COPY package.json package-lock.json ./
RUN npm ci --no-audit --no-fund
COPY tsconfig.json tsconfig.build.json ./
COPY src ./src
RUN npm run build

FROM node:20-bookworm-slim AS runtime
WORKDIR /app
COPY --from=deps /app/node_modules ./node_modules
COPY --from=build /app/dist ./dist
COPY package.json ./
# Files stay owned by root (read-only to the service); the process runs as `node`.
USER node
ENV PORT=8080
EXPOSE 8080
# Same as `npm start` after its build step, without npm in between so SIGTERM
# reaches the process. With API_KEYS or API_KEYS_FILE set the API listens on
# 0.0.0.0; without keys it listens on loopback only (unreachable from outside
# the container).
CMD ["node", "dist/server.js"]
