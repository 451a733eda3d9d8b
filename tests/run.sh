#!/usr/bin/env bash
# The whole test suite, on a fresh machine too: installs the outside PDF readers the tests compare
# against (when missing), then runs every test. README.md gives this command; .ci/run runs it.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$(pwd)

# Debian packages: poppler-utils (pdftotext), qpdf (qpdf --check), libxml2-utils (xmllint),
# chromium (loads the proofreading view headless).
need=()
command -v pdftotext >/dev/null || need+=(poppler-utils)
command -v qpdf >/dev/null || need+=(qpdf)
command -v xmllint >/dev/null || need+=(libxml2-utils)
command -v chromium >/dev/null || need+=(chromium)
if [ ${#need[@]} -gt 0 ]; then
  sudo_=""; [ "$(id -u)" = 0 ] || sudo_="sudo"
  $sudo_ apt-get update -q
  DEBIAN_FRONTEND=noninteractive $sudo_ apt-get install -y -q "${need[@]}"
fi

# PyPI, pinned, in a local virtual environment: PDFium (pypdfium2) and MuPDF (PyMuPDF).
venv="$root/target/readers/venv"
if ! "$venv/bin/python" -c "import pypdfium2, pymupdf" 2>/dev/null; then
  python3 -m venv "$venv"
  "$venv/bin/pip" install -q -r tests/readers/requirements.txt
fi

# npm, pinned, in a local folder: pdf.js (pdfjs-dist).
node_dir="$root/target/readers/node"
if [ ! -d "$node_dir/node_modules/pdfjs-dist" ]; then
  mkdir -p "$node_dir"
  cp tests/readers/package.json "$node_dir/"
  (cd "$node_dir" && npm install --no-audit --no-fund --silent)
fi

export MISTARA_READERS_PYTHON="$venv/bin/python"
export MISTARA_READERS_NODE_MODULES="$node_dir/node_modules"
export MISTARA_REQUIRE_BROWSER=1
cargo fmt --check
cargo test --all-targets "$@"
