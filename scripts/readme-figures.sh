#!/usr/bin/env bash
# Regenerates the README figures from the bundled demo pair (docs/img/*.png).
set -euo pipefail
cd "$(dirname "$0")/.."
npx -y pnpm@12.4.2 demo
for k in colour shadowgraph; do npx -y pnpm@12.4.2 rhofield view "$k" out/demo --force --quiet; done
cp out/demo/density_rho.png docs/img/demo-density.png
cp out/demo/view_colour.png docs/img/demo-colour-schlieren.png
cp out/demo/view_shadowgraph.png docs/img/demo-shadowgraph.png
