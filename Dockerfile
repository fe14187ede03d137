# The production image: Node 20, the service's dependencies, sources run through tsx (no build step).
FROM node:20-bookworm-slim
ENV NODE_ENV=production
WORKDIR /app
COPY package.json package-lock.json ./
RUN npm ci --omit=dev --no-audit --no-fund
COPY bin ./bin
COPY src ./src
COPY drizzle ./drizzle
COPY seed ./seed
COPY tsconfig.json ./
ENV HOST=0.0.0.0 PORT=8080 ENDQUENCH_DATA_DIR=/data
VOLUME ["/data"]
EXPOSE 8080
USER node
CMD ["node", "bin/endquench.js", "serve"]
