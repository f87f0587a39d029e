#!/usr/bin/env bash
# Makes a small root filesystem, from this machine's own files, that can stand in for the runtime
# base image where none can be pulled: the C and C++ runtime libraries the published server links
# against, the ones .NET loads at run time (OpenSSL, zlib), the TLS root certificates, a POSIX
# shell with mkdir and chown for the Dockerfile's one RUN line, and the account files of root.
# Usage: make-rootfs.sh PUBLISHED_APP_DIR OUT_DIR   (OUT_DIR is emptied first)
set -euo pipefail
app=${1:?usage: make-rootfs.sh PUBLISHED_APP_DIR OUT_DIR}
out=${2:?usage: make-rootfs.sh PUBLISHED_APP_DIR OUT_DIR}
app=$(cd "$app" && pwd)

rm -rf "$out"
mkdir -p "$out"/usr/bin "$out"/usr/lib "$out"/usr/lib64 "$out"/usr/sbin "$out"/etc/ssl/certs "$out"/tmp "$out"/root
# The merged-/usr layout of current Debian, so every library keeps the path it has here.
for dir in bin lib lib64 sbin; do ln -s "usr/$dir" "$out/$dir"; done
chmod 1777 "$out/tmp"

# Copies a file to the same path under OUT_DIR, under its own name (a symlink is copied as the file it names).
put() {
  mkdir -p "$(dirname "$out$1")"
  cp -L "$1" "$out$1"
}

# The libraries a binary or library links against, as absolute paths (the loader included).
linked() {
  ldd "$1" 2>/dev/null | awk '$2 == "=>" && $3 ~ /^\// { print $3 } $1 ~ /^\// { print $1 }'
}

# The path of a library by its soname, as the loader finds it here.
library() {
  ldconfig -p | awk -v name="$1" '$1 == name && /x86-64/ && !found { found = $NF } END { print found }'
}

programs=(/usr/bin/dash /usr/bin/mkdir /usr/bin/chown)
loaded=()   # opened by name at run time, so ldd does not list them
for soname in libssl.so.3 libcrypto.so.3 libz.so.1; do
  path=$(library "$soname")
  [ -n "$path" ] || { echo "make-rootfs: $soname not found on this machine" >&2; exit 1; }
  loaded+=("$path")
done

{
  for file in "$app"/SummaryService.Server "$app"/*.so "${programs[@]}" "${loaded[@]}"; do linked "$file"; done
  printf '%s\n' "${programs[@]}" "${loaded[@]}"
} | sort -u | while read -r file; do
  case $file in "$app"/*) ;; *) put "$file" ;; esac   # the app's own libraries come with the app
done
ln -s dash "$out/usr/bin/sh"

put /etc/ssl/certs/ca-certificates.crt
printf 'root:x:0:0:root:/root:/bin/sh\n' > "$out/etc/passwd"
printf 'root:x:0:\n' > "$out/etc/group"
printf 'passwd: files\ngroup: files\nhosts: files dns\n' > "$out/etc/nsswitch.conf"
