#!/usr/bin/env bash
# Regenerates the bundled demo meshes in meshes/demo with the sigmesh generator.
# The scenarios are invented for the demo: a three-key capacitive touch pad with a
# fingertip above the middle key and a ground pour under the board, and a high-voltage
# ball electrode over a grounded plate. Run from the repository root after `npm install`.
set -euo pipefail
out=meshes/demo
s="node dist/cli/main.js mesh --unit mm -q"
# Keypad keys with their traces and the guard ring: scripts/make-demo-keypad.mjs; the ground pour
# under the board is the scene's ground plane.
node scripts/make-demo-keypad.mjs
# Fingertip: an 8 mm radius sphere, 3 mm above key 2.
$s sphere --radius 8 --level 2 --center 0,0,11 --name finger -o $out/finger.stl
# HV electrode: a 10 mm radius ball on a 4 mm radius stem, 15 mm above a 120 mm square plate.
$s sphere --radius 10 --level 3 --center 0,0,25 --name ball -o $out/ball.stl
$s plate --size 120,120 --divisions 24 --grading 4 --center 0,0,0 --name plate -o $out/plate.stl
