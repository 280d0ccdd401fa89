// Method check for filleted-electrode.pro: an isolated sphere of radius a = 5 mm
// (C = 4 pi eps0 a = 0.556325 pF) meshed and solved exactly as the electrode is, with the
// same shell transformation. Regions numbered as in filleted-electrode.geo (no plate).
SetFactory("OpenCASCADE");
DefineConstant[ h = 1, Rint = 30, Cz = 3 ];
Rext = 1.25 * Rint;
Sphere(1) = {0, 0, Cz, 5};
Sphere(3) = {0, 0, Cz, Rint};
Sphere(4) = {0, 0, Cz, Rext};
air() = BooleanDifference{ Volume{3}; Delete; }{ Volume{1}; Delete; };
shell() = BooleanDifference{ Volume{4}; Delete; }{ Volume{air()}; };
all() = BooleanFragments{ Volume{air(), shell()}; Delete; }{};
eps = 1e-3;
condV() = Volume In BoundingBox{-5 - eps, -5 - eps, Cz - 5 - eps, 5 + eps, 5 + eps, Cz + 5 + eps};
Delete { Volume{condV()}; }
elS() = Surface In BoundingBox{-5 - eps, -5 - eps, Cz - 5 - eps, 5 + eps, 5 + eps, Cz + 5 + eps};
airV() = Volume In BoundingBox{-Rint - eps, -Rint - eps, Cz - Rint - eps, Rint + eps, Rint + eps, Cz + Rint + eps};
allV() = Volume{:};
shellV() = allV();
shellV() -= airV();
outerS() = Surface In BoundingBox{-Rext - eps, -Rext - eps, Cz - Rext - eps, Rext + eps, Rext + eps, Cz + Rext + eps};
outerS() -= Surface In BoundingBox{-Rint - eps, -Rint - eps, Cz - Rint - eps, Rint + eps, Rint + eps, Cz + Rint + eps};
Physical Volume("air", 1) = airV();
Physical Volume("shell", 2) = shellV();
Physical Surface("electrode", 11) = elS();
Physical Surface("infinity", 13) = outerS();
Field[3] = Distance;
Field[3].SurfacesList = {elS()};
Field[3].NumPointsPerCurve = 100;
Field[4] = Threshold;
Field[4].InField = 3;
Field[4].SizeMin = h;
Field[4].SizeMax = Rint / 6;
Field[4].DistMin = 3;
Field[4].DistMax = Rint;
Background Field = 4;
Mesh.MeshSizeExtendFromBoundary = 0;
Mesh.MeshSizeFromPoints = 0;
Mesh.MeshSizeFromCurvature = 0;
Mesh.MeshSizeMax = (Rext - Rint) / 2;
Mesh.ElementOrder = 2;
Mesh.HighOrderOptimize = 0;
Mesh.MshFileVersion = 2.2;
Mesh.Algorithm3D = 1;
