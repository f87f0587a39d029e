#!/usr/bin/env bash
# Builds the server image on a machine that cannot pull base images: publishes the server with the
# same script as the Dockerfile's build stage, imports a root filesystem made from this machine's
# libraries (make-rootfs.sh) as the runtime base image, and builds the Dockerfile's prepublished
# stage on it. The image has the layout of the normal build (user, paths, ports, volume, health
# check, entrypoint), since both come from the Dockerfile's runtime-base stage.
# Usage: deploy/container/build-offline.sh [IMAGE_TAG]          (default summaryservice:local)
# Environment: SUMMARYSERVICE_BUILD_DIR (work folder, default $TMPDIR/summaryservice-image),
#              SUMMARYSERVICE_BASE_TAG (default summaryservice-base:local)
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
repo=$(cd "$here/../.." && pwd)
tag=${1:-summaryservice:local}
base=${SUMMARYSERVICE_BASE_TAG:-summaryservice-base:local}
work=${SUMMARYSERVICE_BUILD_DIR:-${TMPDIR:-/tmp}/summaryservice-image}
mkdir -p "$work"

echo "== publishing the server"
"$here/publish-server.sh" "$work/app" "$work/artifacts"

echo "== runtime base image $base"
"$here/make-rootfs.sh" "$work/app" "$work/rootfs"
# A reproducible archive, so an unchanged root filesystem keeps its digest and the image is reused.
tar --sort=name --mtime=@0 --owner=0 --group=0 --numeric-owner -C "$work/rootfs" -cf "$work/rootfs.tar" .
digest=$(sha256sum "$work/rootfs.tar" | cut -d' ' -f1)
if [ "$(docker image inspect --format '{{ index .Config.Labels "rootfs.sha256" }}' "$base" 2>/dev/null)" != "$digest" ]; then
  docker import --change "LABEL rootfs.sha256=$digest" --change 'CMD ["/bin/sh"]' "$work/rootfs.tar" "$base"
else
  echo "unchanged"
fi

echo "== image $tag"
docker build --file "$repo/Dockerfile" --target prepublished --build-arg "RUNTIME_IMAGE=$base" --tag "$tag" "$work/app"
