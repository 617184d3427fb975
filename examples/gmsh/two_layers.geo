// Invented demo: a fictional two-layer ground model (medium-dense sand over soft clay) for the
// triaxcal Gmsh plugin. Not a real site. Each soil layer is a named physical surface; the plugin
// keys its soil units by these names, so re-meshing or renumbering does not lose them.
//   gmsh -option <build>/plugin/triaxcal.opt two_layers.geo two_layers.txproj
width = 40;       // m
sand_depth = 4;   // m
clay_depth = 8;   // m
lc = 1.0;

Point(1) = {0, 0, 0, lc};
Point(2) = {width, 0, 0, lc};
Point(3) = {width, clay_depth, 0, lc};
Point(4) = {0, clay_depth, 0, lc};
Point(5) = {width, clay_depth + sand_depth, 0, lc};
Point(6) = {0, clay_depth + sand_depth, 0, lc};

Line(1) = {1, 2};
Line(2) = {2, 3};
Line(3) = {3, 4};
Line(4) = {4, 1};
Line(5) = {3, 5};
Line(6) = {5, 6};
Line(7) = {6, 4};

Curve Loop(1) = {1, 2, 3, 4};
Plane Surface(1) = {1};
Curve Loop(2) = {-3, 5, 6, 7};
Plane Surface(2) = {2};

// Explicit tags on purpose: .geo_unrolled renumbers them, names stay.
Physical Surface("lower_clay", 21) = {1};
Physical Surface("upper_sand", 22) = {2};
Physical Curve("base", 31) = {1};
Physical Curve("ground_surface", 32) = {6};
