/**
 * Regions in a volume measured voxel by voxel: a stack's slices from..to are laid one after the other in one
 * flat array (slice `from` first), so a voxel (x, y, z) sits at x + width·(y + height·(z − from)) and a 3-D
 * region is a list of such indices; every coefficient then runs unchanged on the region's voxel set. This
 * file maps a 2-D region (plane indices of a polygon, a label image or stored outline) onto slices of that
 * volume (an extrusion; common practice for outlines drawn on one plane of a z-stack).
 *
 * Degenerate cases: an empty slice range (zTo < zFrom) gives an empty region; indices are not checked here
 * (they come from the plane's rasterizer or label image, already inside width × height).
 */

/**
 * The plane indices `indices` (each < `plane` = width × height) repeated on volume slices zFrom..zTo
 * (0-based within the measured volume, inclusive), slice by slice in ascending index order when `indices`
 * is ascending.
 */
export function extrudeIndices(indices: Uint32Array, plane: number, zFrom: number, zTo: number): Uint32Array {
  if (!(Number.isInteger(plane) && plane > 0)) throw new RangeError(`plane must be a positive whole number of pixels, received ${plane}`);
  if (!(Number.isInteger(zFrom) && Number.isInteger(zTo) && zFrom >= 0)) throw new RangeError(`slice range must be whole numbers from 0, received ${zFrom}..${zTo}`);
  const n = indices.length;
  const depth = Math.max(0, zTo - zFrom + 1);
  const out = new Uint32Array(n * depth);
  for (let z = zFrom; z <= zTo; z++) {
    const off = z * plane, o = (z - zFrom) * n;
    for (let k = 0; k < n; k++) out[o + k] = indices[k] + off;
  }
  return out;
}
