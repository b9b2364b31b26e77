#!/usr/bin/env bash
# Look at a study report in a real browser: render one report, take a screenshot with headless
# Chromium (Debian's chromium package, installed here when missing; needs root and apt), and
# check that the page rendered: a PNG of the asked size that is not one flat colour.
#
#   scripts/screenshot-report.sh [NETWORK.toml] [OUT.png]
#
# Defaults: networks/prebiotic-pool.toml and target/report-screenshot.png. The report itself is
# written beside the PNG. Exits non-zero when Chromium cannot be installed or run, or when the
# screenshot is blank or of the wrong size.
set -euo pipefail
cd "$(dirname "$0")/.."

network="${1:-networks/prebiotic-pool.toml}"
png="${2:-target/report-screenshot.png}"
width=1280
height=2000
mkdir -p "$(dirname "$png")"
html_arg="${png%.png}.html" # as given, so the command shown in the report stays short
png="$(cd "$(dirname "$png")" && pwd)/$(basename "$png")"
html="${png%.png}.html"

if ! command -v chromium >/dev/null 2>&1; then
  echo "screenshot-report: chromium is missing; installing Debian's chromium package" >&2
  if ! { apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium; } >&2; then
    echo "screenshot-report: could not install chromium with apt-get (no root, or no access to Debian's" >&2
    echo "  package archive); install it by hand (apt-get install chromium) and run this script again" >&2
    exit 1
  fi
fi

cargo run --release --quiet -- report "$network" --barrier-window "1 h" -o "$html_arg"

profile="$(mktemp -d)"
trap 'rm -rf "$profile"' EXIT
rm -f "$png"
# The wrapper script of Debian's chromium prints harmless noise on some machines; keep it quiet.
chromium --headless --no-sandbox --disable-gpu --hide-scrollbars --user-data-dir="$profile" \
  --window-size="$width,$height" --screenshot="$png" "file://$html" >/dev/null 2>&1 || true
if [ ! -s "$png" ]; then
  echo "screenshot-report: chromium wrote no screenshot of $html" >&2
  exit 1
fi

# Check the PNG with the standard library only: signature, IHDR size, and that the decoded
# pixels are not all one colour (a blank page).
python3 - "$png" "$width" "$height" <<'PY'
import struct, sys, zlib
path, want_w, want_h = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
data = open(path, "rb").read()
if data[:8] != b"\x89PNG\r\n\x1a\n":
    sys.exit(f"{path}: not a PNG")
pos, idat, w = 8, b"", None
while pos < len(data):
    n, kind = struct.unpack(">I4s", data[pos:pos + 8])
    body = data[pos + 8:pos + 8 + n]
    if kind == b"IHDR":
        w, h, depth, colour = struct.unpack(">IIBB", body[:10])
    elif kind == b"IDAT":
        idat += body
    pos += 12 + n
if (w, h) != (want_w, want_h):
    sys.exit(f"{path}: {w}x{h} pixels, expected {want_w}x{want_h}")
channels = {0: 1, 2: 3, 4: 2, 6: 4}.get(colour)
if depth != 8 or channels is None:
    sys.exit(f"{path}: unexpected PNG format (bit depth {depth}, colour type {colour})")
raw = zlib.decompress(idat)
stride = w * channels
# Undo the per-row filters (PNG specification, section 9) to get the real pixels.
prev, colours, ink = bytearray(stride), set(), 0
for row in range(h):
    f = raw[row * (stride + 1)]
    line = bytearray(raw[row * (stride + 1) + 1:(row + 1) * (stride + 1)])
    for i in range(stride):
        a = line[i - channels] if i >= channels else 0
        b = prev[i]
        c = prev[i - channels] if i >= channels else 0
        if f == 1: line[i] = (line[i] + a) & 255
        elif f == 2: line[i] = (line[i] + b) & 255
        elif f == 3: line[i] = (line[i] + (a + b) // 2) & 255
        elif f == 4:
            p = a + b - c
            pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
            line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
    if row % 4 == 0:
        for x in range(0, stride, channels * 4):
            px = bytes(line[x:x + min(channels, 3)])
            colours.add(px)
            if sum(px) < 3 * 100:
                ink += 1
    prev = line
if len(colours) < 16 or ink < 200:
    sys.exit(f"{path}: looks blank ({len(colours)} colours, {ink} dark samples)")
print(f"{path}: {w}x{h}, {len(colours)} distinct colours, {ink} dark samples: rendered")
PY
echo "screenshot-report: $png (report $html)"
