# Fulcrum: one image for the api (`serve`) and the fit worker (`worker`).
# Stage 1 installs the production dependencies from the lockfile; stage 2 is the slim
# runtime with only what it needs, running as the unprivileged `node` user.

FROM node:20-slim AS deps
WORKDIR /app
COPY package.json package-lock.json ./
RUN npm ci --omit=dev --no-audit --no-fund

FROM node:20-slim AS runtime
ENV NODE_ENV=production \
    HOST=0.0.0.0 \
    PORT=3000 \
    FULCRUM_DATA_DIR=/data
WORKDIR /app
COPY --from=deps /app/node_modules ./node_modules
COPY package.json tsconfig.json ./
COPY src ./src
COPY migrations ./migrations
# /data holds the embedded database when DATABASE_URL is not set.
RUN mkdir -p /data && chown node:node /data
USER node
VOLUME ["/data"]
EXPOSE 3000
HEALTHCHECK --interval=15s --timeout=3s --start-period=30s --retries=3 \
  CMD node -e "fetch('http://127.0.0.1:'+(process.env.PORT||3000)+'/healthz').then(r=>process.exit(r.ok?0:1),()=>process.exit(1))"
# tsx (a production dependency) runs the TypeScript sources directly.
ENTRYPOINT ["node", "--import", "tsx", "src/main.ts"]
CMD ["serve"]
