#!/usr/bin/env bash
# Publishes the server self-contained (its own .NET runtime, no SDK or shared runtime needed in the
# image) into OUT_DIR. Both image builds run this same script: the Dockerfile's build stage inside
# the SDK image, and build-offline.sh on this machine.
# Usage: publish-server.sh OUT_DIR [WORK_DIR]   (RID=linux-arm64 for another platform)
set -euo pipefail
out=${1:?usage: publish-server.sh OUT_DIR [WORK_DIR]}
work=${2:-${TMPDIR:-/tmp}/summaryservice-publish}
repo=$(cd "$(dirname "$0")/../.." && pwd)
rid=${RID:-linux-x64}

# A separate artifacts folder keeps this Release build away from the developer's bin/ and obj/
# (a test run may publish while other tests use the Debug build); no build server or node reuse,
# so nothing outlives the command and holds on to its output.
rm -rf "$out"
DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1 dotnet publish "$repo/src/SummaryService.Server" \
  -c Release -r "$rid" --self-contained -o "$out" --artifacts-path "$work" \
  -nodeReuse:false -p:UseSharedCompilation=false -p:DebugType=none -p:PublishDocumentationFiles=false

# LTTng tracing is not installed in the image; without its provider the runtime does not try to load it.
rm -f "$out/libcoreclrtraceptprovider.so"
