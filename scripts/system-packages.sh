#!/usr/bin/env bash
# System packages the tests need, from Debian's archive (run as root, or with sudo available):
#   weasyprint's libraries (Pango, HarfBuzz with its font subsetter, fonts),
#   poppler-utils (pdftotext/pdftoppm for the report layout tests),
#   chromium (the bench page's browser tests; Playwright drives this system browser),
#   postgresql (the plant records store's tests start a throwaway cluster).
set -euo pipefail
packages=(
    libpango-1.0-0 libpangoft2-1.0-0 libharfbuzz0b libharfbuzz-subset0 fonts-dejavu-core
    poppler-utils
    chromium
    postgresql
)
missing=()
for p in "${packages[@]}"; do
    dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -eq 0 ]; then
    echo "system packages: all present"
    exit 0
fi
as_root=()
[ "$(id -u)" -eq 0 ] || as_root=(sudo)
"${as_root[@]}" apt-get update -qq
DEBIAN_FRONTEND=noninteractive "${as_root[@]}" apt-get install -y -qq --no-install-recommends "${missing[@]}"
echo "system packages installed: ${missing[*]}"
