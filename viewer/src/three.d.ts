// three ships without type declarations and @types/three is not a dependency of sigmesh.
declare module "three";
declare module "three/examples/jsm/controls/OrbitControls.js";
