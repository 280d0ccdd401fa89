#!/usr/bin/env bash
# Regenerates the bundled demo meshes in meshes/demo with the sigmesh generator.
# The scenarios are invented for the demo: a high-voltage ball electrode over a grounded
# plate (the touch-pad scene, keypad.json, is made of generated shapes). Run from the repository root after `npm install`.
set -euo pipefail
out=meshes/demo
s="node dist/cli/main.js mesh --unit mm -q"
# The keypad (keys with their traces, guard ring, fingertip, board) is drawn in keypad.json itself
# from generated shapes and parameters; it needs no mesh file.
# HV electrode: a 10 mm radius ball on a 4 mm radius stem, 15 mm above a 120 mm square plate.
$s sphere --radius 10 --level 3 --center 0,0,25 --name ball -o $out/ball.stl
$s plate --size 120,120 --divisions 24 --grading 4 --center 0,0,0 --name plate -o $out/plate.stl
