// Filleted box electrode over a grounded plate, for the finite-element reference
// (tests/reference/fem/filleted-electrode.md). Lengths in millimetres.
//
// Electrode: box 10 x 10 x 4, every edge and corner filleted at radius 1, bottom face
// at z = 3. Plate: 30 x 30 x 1, top face at z = 0, centred under the electrode.
// The air around them is meshed inside a sphere of radius Rint; the spherical shell
// Rint < r < Rext is mapped to infinity by GetDP's VolSphShell Jacobian (see the .pro).
//
// Parameters (gmsh -setnumber NAME VALUE):
//   h      mesh size on the electrode and the plate (mm)
//   Rint   inner radius of the shell (mm), Rext = 1.25 Rint
//   Cz     z of the shell's centre (mm)
SetFactory("OpenCASCADE");

DefineConstant[ h = 1, Rint = 30, Cz = 3 ];
Rext = 1.25 * Rint;

// The electrode: a box with all 12 edges filleted (the corners become blends).
Box(1) = {-5, -5, 3, 10, 10, 4};
f() = Abs(Boundary{ Volume{1}; });
c() = Unique(Abs(Boundary{ Surface{f()}; }));
el() = Fillet{1}{c()}{1};

// The plate.
Box(2) = {-15, -15, -1, 30, 30, 1};

// Air sphere and the shell.
Sphere(3) = {0, 0, Cz, Rint};
Sphere(4) = {0, 0, Cz, Rext};

// Air = inner sphere without the conductors; shell = outer sphere without the inner one.
air() = BooleanDifference{ Volume{3}; Delete; }{ Volume{el(0), 2}; Delete; };
shell() = BooleanDifference{ Volume{4}; Delete; }{ Volume{air()}; };
all() = BooleanFragments{ Volume{air(), shell()}; Delete; }{};

// Identify the pieces by bounding boxes.
eps = 1e-3;
elS() = Surface In BoundingBox{-5 - eps, -5 - eps, 3 - eps, 5 + eps, 5 + eps, 7 + eps};
plS() = Surface In BoundingBox{-15 - eps, -15 - eps, -1 - eps, 15 + eps, 15 + eps, eps};
// OCC's fragments fill the air's two cavities with solids again: drop them (keeping
// their surfaces, which bound the air).
condV() = Volume In BoundingBox{-5 - eps, -5 - eps, 3 - eps, 5 + eps, 5 + eps, 7 + eps};
condV() += Volume In BoundingBox{-15 - eps, -15 - eps, -1 - eps, 15 + eps, 15 + eps, eps};
Delete { Volume{condV()}; }
airV() = Volume In BoundingBox{-Rint - eps, -Rint - eps, Cz - Rint - eps, Rint + eps, Rint + eps, Cz + Rint + eps};
allV() = Volume{:};
shellV() = allV();
shellV() -= airV();
outerS() = Surface In BoundingBox{-Rext - eps, -Rext - eps, Cz - Rext - eps, Rext + eps, Rext + eps, Cz + Rext + eps};
outerS() -= Surface In BoundingBox{-Rint - eps, -Rint - eps, Cz - Rint - eps, Rint + eps, Rint + eps, Cz + Rint + eps};

Physical Volume("air", 1) = airV();
Physical Volume("shell", 2) = shellV();
Physical Surface("electrode", 11) = elS();
Physical Surface("plate", 12) = plS();
Physical Surface("infinity", 13) = outerS();

// Sizes: h on the electrode, on the plate near the electrode and near its edges (h/2
// along the plate's sharp edges, where the charge is singular); growing with distance.
plC() = Unique(Abs(Boundary{ Surface{plS()}; }));
Field[1] = Distance;
Field[1].CurvesList = {plC()};
Field[1].NumPointsPerCurve = 300;
Field[2] = Threshold;
Field[2].InField = 1;
Field[2].SizeMin = h / 2;
Field[2].SizeMax = Rint / 6;
Field[2].DistMin = h / 2;
Field[2].DistMax = Rint;
Field[3] = Distance;
Field[3].SurfacesList = {elS()};
Field[3].NumPointsPerCurve = 100;
Field[4] = Threshold;
Field[4].InField = 3;
Field[4].SizeMin = h;
Field[4].SizeMax = Rint / 6;
Field[4].DistMin = 3;
Field[4].DistMax = Rint;
Field[5] = Min;
Field[5].FieldsList = {2, 4};
Background Field = 5;
Mesh.MeshSizeExtendFromBoundary = 0;
Mesh.MeshSizeFromPoints = 0;
Mesh.MeshSizeFromCurvature = 16;  // elements per 2 pi on the fillets
Mesh.MeshSizeMax = (Rext - Rint) / 2;
Mesh.ElementOrder = 2;
Mesh.HighOrderOptimize = 0;
Mesh.MshFileVersion = 2.2;
Mesh.Algorithm3D = 1;
