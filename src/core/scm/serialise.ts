/**
 * Byte format of a compiled model (format version MODEL_FORMAT_VERSION):
 *
 *   offset 0   4 bytes  magic "FCSM"
 *   offset 4   uint32   format version (little-endian)
 *   offset 8   uint32   header length L
 *   offset 12  L bytes  UTF-8 JSON header: scalars, names, levels, meta, and the list of
 *                        sections [name, type, element count] in file order
 *   then, each section starting at a multiple of 8 bytes (zero padding between): the typed
 *   array's elements, raw little-endian (Float64 values copied byte for byte, so NaN payloads
 *   and signed zeros survive).
 *
 * deserialise(serialise(m)) reproduces every field exactly, and serialise of the result gives
 * the same bytes.
 */
import {
  type CompiledModel,
  type CompiledModelMeta,
  MECH_FAMILY,
  MECH_NODE,
  MECH_PARAM_COUNT,
  MECH_PARAM_OFFSET,
  MECH_PARENT_COUNT,
  MECH_PARENT_OFFSET,
  MECH_RESID_COUNT,
  MECH_RESID_OFFSET,
  MECH_STRIDE,
  MODEL_FORMAT_VERSION,
  SCALAR_STRIDE,
} from './compiled-model.js';

/** A byte string that is not a compiled model of a format this code reads. */
export class ModelFormatError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ModelFormatError';
  }
}

const MAGIC = [0x46, 0x43, 0x53, 0x4d]; // "FCSM"

type SectionType = 'u8' | 'i32' | 'f64';
type ArrayField =
  | 'kinds' | 'nLevels' | 'centre' | 'scale' | 'graphWeights' | 'graphCounts' | 'adjacency' | 'topoOrder'
  | 'mechanismOf' | 'edgeProbability' | 'mechTable' | 'mechScalars' | 'mechParents' | 'mechParams'
  | 'mechResiduals' | 'referenceRowIndex' | 'referenceWeights' | 'referenceValues' | 'referenceNoise';

const SECTIONS: ReadonlyArray<readonly [ArrayField, SectionType]> = [
  ['kinds', 'u8'], ['nLevels', 'i32'], ['centre', 'f64'], ['scale', 'f64'],
  ['graphWeights', 'f64'], ['graphCounts', 'i32'], ['adjacency', 'u8'], ['topoOrder', 'i32'],
  ['mechanismOf', 'i32'], ['edgeProbability', 'f64'],
  ['mechTable', 'i32'], ['mechScalars', 'f64'], ['mechParents', 'i32'], ['mechParams', 'f64'], ['mechResiduals', 'f64'],
  ['referenceRowIndex', 'i32'], ['referenceWeights', 'f64'], ['referenceValues', 'f64'], ['referenceNoise', 'f64'],
];

const WIDTH: Record<SectionType, number> = { u8: 1, i32: 4, f64: 8 };
const LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

interface Header {
  readonly p: number;
  readonly nGraphs: number;
  readonly nMechanisms: number;
  readonly nReference: number;
  readonly names: readonly string[];
  readonly levels: readonly (readonly string[] | null)[];
  readonly meta: CompiledModelMeta;
  readonly sections: ReadonlyArray<readonly [string, SectionType, number]>;
}

/** The model as bytes (see the format above). */
export function serialise(model: CompiledModel): Uint8Array {
  const header: Header = {
    p: model.p,
    nGraphs: model.nGraphs,
    nMechanisms: model.nMechanisms,
    nReference: model.nReference,
    names: model.names,
    levels: model.levels,
    meta: model.meta,
    sections: SECTIONS.map(([name, type]) => [name, type, model[name].length] as const),
  };
  const json = new TextEncoder().encode(JSON.stringify(header));
  let size = align8(12 + json.length);
  for (const [name, type] of SECTIONS) size = align8(size + model[name].length * WIDTH[type]);
  const out = new Uint8Array(size);
  out.set(MAGIC, 0);
  const dv = new DataView(out.buffer);
  dv.setUint32(4, model.formatVersion, true);
  dv.setUint32(8, json.length, true);
  out.set(json, 12);
  let off = align8(12 + json.length);
  for (const [name, type] of SECTIONS) {
    const arr = model[name];
    const bytes = new Uint8Array(arr.buffer, arr.byteOffset, arr.byteLength);
    if (LITTLE_ENDIAN || type === 'u8') out.set(bytes, off);
    else swapInto(bytes, out, off, WIDTH[type]);
    off = align8(off + arr.byteLength);
  }
  return out;
}

/** A model from bytes written by `serialise`; throws ModelFormatError on anything else. */
export function deserialise(bytes: Uint8Array): CompiledModel {
  if (bytes.length < 12 || MAGIC.some((b, i) => bytes[i] !== b)) throw new ModelFormatError('not a compiled model (bad magic bytes)');
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const version = dv.getUint32(4, true);
  if (version !== MODEL_FORMAT_VERSION) {
    throw new ModelFormatError(`compiled model format version ${version} is not supported (this build reads version ${MODEL_FORMAT_VERSION})`);
  }
  const len = dv.getUint32(8, true);
  if (12 + len > bytes.length) throw new ModelFormatError('truncated compiled model (header)');
  let header: Header;
  try {
    header = JSON.parse(new TextDecoder().decode(bytes.subarray(12, 12 + len))) as Header;
  } catch {
    throw new ModelFormatError('corrupt compiled model header');
  }
  const arrays: Partial<Record<ArrayField, Uint8Array | Int32Array | Float64Array>> = {};
  let off = align8(12 + len);
  if (header.sections.length !== SECTIONS.length) throw new ModelFormatError('compiled model has an unexpected section list');
  for (let s = 0; s < SECTIONS.length; s++) {
    const [name, type] = SECTIONS[s];
    const [hName, hType, count] = header.sections[s];
    if (hName !== name || hType !== type) throw new ModelFormatError(`section ${s} is ${hName}:${hType}, expected ${name}:${type}`);
    const nBytes = count * WIDTH[type];
    if (off + nBytes > bytes.length) throw new ModelFormatError(`truncated compiled model (section ${name})`);
    const copy = new Uint8Array(nBytes);
    if (LITTLE_ENDIAN || type === 'u8') copy.set(bytes.subarray(off, off + nBytes));
    else swapInto(bytes.subarray(off, off + nBytes), copy, 0, WIDTH[type]);
    arrays[name] = type === 'u8' ? copy : type === 'i32' ? new Int32Array(copy.buffer) : new Float64Array(copy.buffer);
    off = align8(off + nBytes);
  }
  const { p, nGraphs: G, nMechanisms: M, nReference: R } = header;
  const expect: Partial<Record<ArrayField, number>> = {
    kinds: p, nLevels: p, centre: p, scale: p, graphWeights: G, graphCounts: G, adjacency: G * p * p,
    topoOrder: G * p, mechanismOf: G * p, edgeProbability: p * p, referenceRowIndex: R, referenceWeights: R,
    referenceValues: p * R, referenceNoise: M * R,
  };
  for (const [name, n] of Object.entries(expect)) {
    if (arrays[name as ArrayField]!.length !== n) throw new ModelFormatError(`section ${name} has ${arrays[name as ArrayField]!.length} entries, expected ${n}`);
  }
  const model: CompiledModel = {
    formatVersion: version,
    meta: header.meta,
    p,
    names: header.names,
    kinds: arrays.kinds as Uint8Array,
    levels: header.levels,
    nLevels: arrays.nLevels as Int32Array,
    centre: arrays.centre as Float64Array,
    scale: arrays.scale as Float64Array,
    nGraphs: G,
    graphWeights: arrays.graphWeights as Float64Array,
    graphCounts: arrays.graphCounts as Int32Array,
    adjacency: arrays.adjacency as Uint8Array,
    topoOrder: arrays.topoOrder as Int32Array,
    mechanismOf: arrays.mechanismOf as Int32Array,
    edgeProbability: arrays.edgeProbability as Float64Array,
    nMechanisms: M,
    mechTable: arrays.mechTable as Int32Array,
    mechScalars: arrays.mechScalars as Float64Array,
    mechParents: arrays.mechParents as Int32Array,
    mechParams: arrays.mechParams as Float64Array,
    mechResiduals: arrays.mechResiduals as Float64Array,
    nReference: R,
    referenceRowIndex: arrays.referenceRowIndex as Int32Array,
    referenceWeights: arrays.referenceWeights as Float64Array,
    referenceValues: arrays.referenceValues as Float64Array,
    referenceNoise: arrays.referenceNoise as Float64Array,
  };
  checkTables(model);
  return model;
}

/** Every index stored in the tables points inside its array (a corrupt artifact fails here, not in a query). */
function checkTables(m: CompiledModel): void {
  const bad = (what: string) => {
    throw new ModelFormatError(`corrupt compiled model: ${what}`);
  };
  if (m.names.length !== m.p || m.levels.length !== m.p) bad('variable list');
  if (m.mechTable.length !== m.nMechanisms * MECH_STRIDE || m.mechScalars.length !== m.nMechanisms * SCALAR_STRIDE) bad('mechanism table size');
  for (let j = 0; j < m.p; j++) if (m.kinds[j] > 2) bad(`kind of variable ${j}`);
  for (let k = 0; k < m.mechanismOf.length; k++) if (!(m.mechanismOf[k] >= 0 && m.mechanismOf[k] < m.nMechanisms)) bad('mechanism index');
  for (let k = 0; k < m.topoOrder.length; k++) if (!(m.topoOrder[k] >= 0 && m.topoOrder[k] < m.p)) bad('topological order');
  for (let i = 0; i < m.nMechanisms; i++) {
    const t = i * MECH_STRIDE;
    const within = (off: number, count: number, len: number) => off >= 0 && count >= 0 && off + count <= len;
    if (!(m.mechTable[t + MECH_FAMILY] >= 0 && m.mechTable[t + MECH_FAMILY] <= 4)) bad(`family of mechanism ${i}`);
    if (!(m.mechTable[t + MECH_NODE] >= 0 && m.mechTable[t + MECH_NODE] < m.p)) bad(`node of mechanism ${i}`);
    if (!within(m.mechTable[t + MECH_PARAM_OFFSET], m.mechTable[t + MECH_PARAM_COUNT], m.mechParams.length)) bad(`parameters of mechanism ${i}`);
    if (!within(m.mechTable[t + MECH_RESID_OFFSET], m.mechTable[t + MECH_RESID_COUNT], m.mechResiduals.length)) bad(`residuals of mechanism ${i}`);
    const po = m.mechTable[t + MECH_PARENT_OFFSET];
    const pc = m.mechTable[t + MECH_PARENT_COUNT];
    if (!within(po, pc, m.mechParents.length)) bad(`parents of mechanism ${i}`);
    for (let a = 0; a < pc; a++) if (!(m.mechParents[po + a] >= 0 && m.mechParents[po + a] < m.p)) bad(`parent of mechanism ${i}`);
  }
}

function align8(n: number): number {
  return (n + 7) & ~7;
}

/** Copy with each `width`-byte element reversed (big-endian hosts only). */
function swapInto(src: Uint8Array, dst: Uint8Array, off: number, width: number): void {
  for (let i = 0; i < src.length; i += width) for (let b = 0; b < width; b++) dst[off + i + b] = src[i + width - 1 - b];
}
