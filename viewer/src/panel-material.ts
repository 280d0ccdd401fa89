/**
 * The material of the conductor surfaces: three.js Lambert shading with
 *  - per-panel colours as sRGB bytes (3 per vertex, normalised), turned into linear light in
 *    the vertex shader, so the attribute is a quarter of the float one and exact to the
 *    colour table (bytes holding linear light would band in the dark end of viridis);
 *  - flat shading, the face normal taken from screen-space derivatives of the view position
 *    (three.js `flatShading`), so no normal attribute is stored or computed;
 *  - mesh edges drawn in the fragment shader from barycentric coordinates that follow from
 *    the vertex number (three vertices per panel, drawn without an index), so showing edges
 *    builds nothing and costs a few operations per pixel instead of a line per edge. The
 *    line is about one pixel wide wherever the panel sits: the barycentric coordinate is
 *    divided by its screen-space rate of change (fwidth), the method of J. A. Bærentzen,
 *    S. L. Nielsen, M. Gjøl and B. D. Larsen, "Two methods for antialiased wireframe drawing
 *    with hidden line removal", Proc. Spring Conference on Computer Graphics (2008).
 */
import * as THREE from "three";

/** sRGB of the mesh-edge lines and how much of it covers a panel's colour on a line. */
const EDGE_COLOUR = 0x222222;
const EDGE_COVER = 0.55;

export interface PanelMaterial {
  material: any;
  /** 1 draws the mesh edges, 0 not; changing it needs no recompilation. */
  edges: { value: number };
}

export function panelMaterial(side: number): PanelMaterial {
  const edges = { value: 0 };
  const material = new THREE.MeshLambertMaterial({
    vertexColors: true, flatShading: true, side, clippingPlanes: [],
    polygonOffset: true, polygonOffsetFactor: 1, polygonOffsetUnits: 1,
  });
  const edgeLinear = new THREE.Color(EDGE_COLOUR); // three.js stores colours in linear light
  material.onBeforeCompile = (shader: { uniforms: Record<string, unknown>; vertexShader: string; fragmentShader: string }) => {
    shader.uniforms.panelEdges = edges;
    shader.uniforms.panelEdgeColour = { value: edgeLinear };
    shader.vertexShader = shader.vertexShader
      .replace("#include <common>", `#include <common>
varying vec3 vPanelBary;
vec3 panelSrgbToLinear(vec3 c) {
  return mix(c / 12.92, pow((c + 0.055) / 1.055, vec3(2.4)), step(vec3(0.04045), c));
}`)
      .replace("#include <color_vertex>", `#include <color_vertex>
vColor.rgb = panelSrgbToLinear(vColor.rgb);
int corner = gl_VertexID - 3 * (gl_VertexID / 3);
vPanelBary = vec3(corner == 0 ? 1.0 : 0.0, corner == 1 ? 1.0 : 0.0, corner == 2 ? 1.0 : 0.0);`);
    shader.fragmentShader = shader.fragmentShader
      .replace("#include <common>", `#include <common>
varying vec3 vPanelBary;
uniform float panelEdges;
uniform vec3 panelEdgeColour;`)
      .replace("#include <color_fragment>", `#include <color_fragment>
if (panelEdges > 0.0) {
  vec3 d = fwidth(vPanelBary);
  vec3 a = smoothstep(vec3(0.0), 1.2 * d, vPanelBary);
  float line = 1.0 - min(min(a.x, a.y), a.z);
  diffuseColor.rgb = mix(diffuseColor.rgb, panelEdgeColour, ${EDGE_COVER.toFixed(2)} * line * panelEdges);
}`);
  };
  material.customProgramCacheKey = () => "sigmesh-panel-1";
  return { material, edges };
}
