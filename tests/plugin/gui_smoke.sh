#!/bin/sh
# GUI smoke test: the real Gmsh GUI under xvfb-run opens the invented two-layer example with the
# triaxcal project, the client fills the tree at start-up, and a screenshot of the whole screen is
# saved as an artefact (OUT/gui_smoke.png, or OUT/gui_smoke.xwd without python3).
# Exit 77 (CTest: skipped) with a message saying what to install when there is no X server package.
# usage: gui_smoke.sh GMSH CLIENT EXAMPLES_GMSH_DIR OUT_DIR   (run from CTest)
set -u
gmsh=$1
client=$2
examples=$3
out=$4
here=$(cd "$(dirname "$0")" && pwd)

for tool in xvfb-run xauth; do
  if ! command -v "$tool" >/dev/null 2>&1; then
    echo "SKIPPED: '$tool' is not installed, so there is no X server for the GUI smoke test" \
         "(apt-get install xvfb xauth)"
    exit 77
  fi
done
if ! command -v xwd >/dev/null 2>&1; then
  echo "SKIPPED: 'xwd' is not installed, so the screenshot cannot be taken (apt-get install x11-apps)"
  exit 77
fi

rm -rf "$out"
mkdir -p "$out/home" "$out/gmsh" "$out/calibrate"
cp "$examples"/* "$out/gmsh/"
cp "$examples"/../calibrate/* "$out/calibrate/"
cd "$out/gmsh" || exit 1
cat > gui.opt <<OPT
Solver.Name1 = "triaxcal";
Solver.Executable1 = "$client";
Solver.Extension1 = ".txproj";
Solver.AutoMesh = 0;
Solver.AutoSaveDatabase = 0;
General.GraphicsFontEngine = "StringTexture";
General.Terminal = 1;
General.GraphicsWidth = 900;
General.GraphicsHeight = 700;
General.MenuWidth = 420;
General.GraphicsPositionX = 0;
General.GraphicsPositionY = 0;
OPT

# Inside the virtual display: start the GUI, give the client time to fill the tree, dump the
# screen, then end the gmsh we started (by its pid).
GMSH_HOME="$out/home" HOME="$out/home" timeout 90 xvfb-run -a -s "-screen 0 1400x900x24" sh -c '
  "$0" -nopopup -option gui.opt two_layers.geo two_layers.txproj > gmsh.log 2>&1 &
  pid=$!
  i=0
  while [ $i -lt 40 ] && ! grep -q "\"tag\": 22" two_layers.txproj 2>/dev/null; do sleep 0.25; i=$((i + 1)); done
  sleep 2
  xwd -root -silent -out ../gui_smoke.xwd
  kill $pid 2>/dev/null
  wait $pid 2>/dev/null
  exit 0' "$gmsh"
rc=$?
cat gmsh.log
if [ $rc -ne 0 ]; then
  echo "FAILED: xvfb-run exited with $rc"
  exit 1
fi
if ! grep -q "Running 'triaxcal'" gmsh.log; then
  echo "FAILED: the Gmsh GUI did not run the triaxcal client"
  exit 1
fi
if ! grep -q '"tag": 22' two_layers.txproj; then
  echo "FAILED: the client did not save the project with the physical groups it read"
  exit 1
fi
if [ ! -s ../gui_smoke.xwd ]; then
  echo "FAILED: no screenshot"
  exit 1
fi
if command -v python3 >/dev/null 2>&1 && python3 "$here/xwd_to_png.py" ../gui_smoke.xwd ../gui_smoke.png; then
  rm -f ../gui_smoke.xwd
  echo "screenshot: $out/gui_smoke.png"
else
  echo "screenshot: $out/gui_smoke.xwd (python3 missing: not converted to PNG)"
fi
exit 0
