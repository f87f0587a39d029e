# SummaryService server image.
#
#   docker build -t summaryservice .                  SDK build stage, then the runtime image
#   deploy/container/build-offline.sh                 the same runtime stage on a machine that cannot
#                                                     pull base images (see the README)
#
# Stages: runtime-base holds everything the running image is (user, paths, ports, volume, health
# check, entrypoint) except the app; prepublished adds an app published beforehand (its build
# context is the published folder); build publishes inside the SDK image; runtime, the default,
# adds that. prepublished comes before build so that a builder which runs every earlier stage (the
# classic one) never needs the SDK image for it.

ARG RUNTIME_IMAGE=mcr.microsoft.com/dotnet/runtime-deps:10.0
ARG SDK_IMAGE=mcr.microsoft.com/dotnet/sdk:10.0

FROM ${RUNTIME_IMAGE} AS runtime-base
# A fixed numeric account, so orchestrators can check it is not root; its data directory is the volume.
RUN mkdir -p /var/lib/summaryservice \
 && chown 10001:10001 /var/lib/summaryservice \
 && echo 'summary:x:10001:10001:SummaryService:/var/lib/summaryservice:/usr/sbin/nologin' >> /etc/passwd \
 && echo 'summary:x:10001:' >> /etc/group
# Listen on every address inside the container (the ports are published or proxied from outside);
# data in the volume; no ICU needed (the server formats and compares culture-invariantly).
ENV Kestrel__Endpoints__Grpc__Url=http://0.0.0.0:5170 \
    Kestrel__Endpoints__Http__Url=http://0.0.0.0:5171 \
    Persistence__DataDirectory=/var/lib/summaryservice \
    DOTNET_SYSTEM_GLOBALIZATION_INVARIANT=true
VOLUME /var/lib/summaryservice
EXPOSE 5170 5171
WORKDIR /var/lib/summaryservice
USER 10001:10001
# SIGTERM starts the graceful stop: open streams end, then the final snapshot. Give it time
# (docker stop -t 45; Kubernetes terminationGracePeriodSeconds; compose stop_grace_period).
STOPSIGNAL SIGTERM
# The server binary asks its own gRPC health service (see HealthProbe): no extra client in the image.
HEALTHCHECK --interval=10s --timeout=5s --start-period=60s --retries=3 CMD ["/app/SummaryService.Server", "--probe"]
ENTRYPOINT ["/app/SummaryService.Server"]

FROM runtime-base AS prepublished
COPY . /app/

FROM ${SDK_IMAGE} AS build
WORKDIR /src
COPY . .
RUN bash deploy/container/publish-server.sh /app /tmp/publish-work

FROM runtime-base AS runtime
COPY --from=build /app /app/
