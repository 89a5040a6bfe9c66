#!/usr/bin/env bash
# Draws every `roughride plot` picture from the demo files and renders each
# SVG to PNG for a look by eye (rsvg-convert from librsvg2-bin:
# `apt-get install -y librsvg2-bin`). Usage: scripts/render_plots.sh [OUTDIR]
set -euo pipefail
here="$(cd "$(dirname "$0")/.." && pwd)"
out="${1:-$here/target/plots}"
mkdir -p "$out"
cargo build --release --quiet --manifest-path "$here/Cargo.toml"
rr="$here/target/release/roughride"
car="$here/profiles/vehicles/demo_hatchback.toml"

"$rr" sweep --vehicle "$car" --classes A,B,C,D --speeds 10:40:5 --seeds 3 --length 500 -o "$out/grid.csv"
"$rr" plot comfort "$out/grid.csv" -o "$out/comfort.svg"
"$rr" plot comfort "$out/grid.csv" --kmh -o "$out/comfort_kmh.svg"
"$rr" simulate --vehicle "$car" --class C --seed 1 --length 500 --speed 20 --history "$out/history.csv" > /dev/null
"$rr" plot histogram "$out/history.csv" --column travel_front_m -o "$out/travel_front.svg"
"$rr" plot history "$out/history.csv" --columns driver_accel_m_s2,rear_passenger_accel_m_s2 --from 10 --to 15 -o "$out/window.svg"
"$rr" plot history "$out/history.csv" --columns driver_accel_m_s2,travel_front_m,tyre_load_front_n --from 10 --to 15 -o "$out/window_units.svg"
"$rr" profile --class C --length 2000 --seed 3 -o "$out/road.csv" > /dev/null
"$rr" plot psd "$out/road.csv" -o "$out/psd.svg"
"$rr" sweep --vehicle "$here/profiles/vehicles/demo_minibus.toml" \
    --vary rear.damping='*0.6:*1.4:*0.2' --vary rear.spring_rate='*0.8:*1.2:*0.2' \
    --classes B,C,D --speeds 40kmh:80kmh:20kmh --seeds 2 --length 500 -o "$out/minibus_study.csv"
"$rr" plot tradeoff "$out/minibus_study.csv" --seat 2 --axle rear -o "$out/tradeoff.svg" > /dev/null
"$rr" plot frf --vehicle "$car" --speed 72kmh -o "$out/frf.svg"
"$rr" plot modes --vehicle "$car" -o "$out/modes.svg"
"$rr" lifetime --usage "$here/profiles/usage/delivery_van.toml" \
    --exceedance "$out/van_life_exceedance.csv" --matrix "$out/van_life_matrix.csv" > /dev/null
"$rr" plot exceedance "$out/van_life_exceedance.csv" --axle rear --quantity force -o "$out/van_life_exceedance.svg"
"$rr" plot range-mean "$out/van_life_matrix.csv" --axle rear --quantity force -o "$out/van_life_range_mean.svg"

if command -v rsvg-convert > /dev/null; then
    for svg in "$out"/*.svg; do
        rsvg-convert "$svg" -o "${svg%.svg}.png"
    done
    echo "PNG files in $out"
else
    echo "rsvg-convert not found (apt-get install -y librsvg2-bin); SVG files in $out"
fi
