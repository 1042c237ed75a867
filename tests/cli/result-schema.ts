// The JSON contract of `voltscape solve --json` (docs/json-format.md, architecture.md "Contracts"),
// as a JSON Schema for ajv. Only what the contract promises is required; extra fields are allowed.
const num = { type: ['number', 'null'] }; // null stands for a non-finite number
const point = { type: 'array', items: num, minItems: 2, maxItems: 3 };
const convergence = {
  type: 'object',
  required: ['relativeError', 'extrapolated'],
  properties: { relativeError: num, extrapolated: num },
};
const range = {
  type: 'object',
  required: ['start', 'end'],
  properties: {
    start: { type: 'object', required: ['line', 'character'] },
    end: { type: 'object', required: ['line', 'character'] },
  },
};

export const resultSchema = {
  type: 'object',
  required: ['format', 'ok', 'file', 'space', 'electrodes', 'capacitance', 'energy', 'gaps', 'probes', 'diagnostics', 'stats', 'slices'],
  properties: {
    format: { const: 'voltscape-result/1' },
    ok: { const: true },
    file: { type: 'string' },
    title: { type: ['string', 'null'] },
    space: { enum: ['3d', 'axisymmetric', 'planar'] },
    electrodes: {
      type: 'array',
      items: {
        type: 'object',
        required: ['name', 'potential', 'charge', 'maxField', 'maxFieldAt', 'maxFieldOnEdge', 'capacitance', 'capacitanceConvergence', 'maxFieldConvergence'],
        properties: {
          name: { type: 'string' },
          potential: num,
          charge: num,
          maxField: num,
          maxFieldAt: point,
          maxFieldOnEdge: { type: 'boolean' },
          capacitance: num,
          capacitanceConvergence: convergence,
          maxFieldConvergence: convergence,
          breakdown: {
            anyOf: [
              { type: 'null' },
              {
                type: 'object',
                required: ['limitMargin', 'strengthMargin', 'coronaOnset', 'coronaRadius', 'coronaMargin'],
                properties: {
                  limitMargin: { type: ['number', 'null'] },
                  strengthMargin: { type: ['number', 'null'] },
                  coronaOnset: { type: ['number', 'null'] },
                  coronaRadius: { type: ['number', 'null'] },
                  coronaMargin: { type: ['number', 'null'] },
                },
              },
            ],
          },
        },
      },
    },
    capacitance: {
      type: 'object',
      required: ['names', 'matrix', 'asymmetry'],
      properties: {
        names: { type: 'array', items: { type: 'string' } },
        matrix: { type: 'array', items: { type: 'array', items: num } },
        asymmetry: num,
      },
    },
    energy: num,
    gaps: {
      type: 'array',
      items: {
        type: 'object',
        required: ['between', 'distance', 'voltage', 'paschen', 'paschenValid', 'margin'],
        properties: {
          between: { type: 'array', items: { type: 'string' }, minItems: 2, maxItems: 2 },
          distance: num,
          voltage: num,
          paschen: num,
          paschenValid: { type: 'boolean' },
          margin: { type: ['number', 'null'] },
        },
      },
    },
    probes: {
      type: 'array',
      items: {
        type: 'object',
        required: ['name', 'points'],
        properties: {
          name: { type: 'string' },
          points: {
            type: 'array',
            items: {
              type: 'object',
              required: ['at', 'potential', 'field'],
              properties: { at: point, potential: num, field: { type: 'array', items: num }, fieldMagnitude: num },
            },
          },
        },
      },
    },
    limit: {
      oneOf: [
        { type: 'null' },
        { type: 'object', required: ['field', 'peak', 'broken'], properties: { field: num, peak: num, broken: { type: 'boolean' } } },
      ],
    },
    slices: {
      type: 'array',
      items: {
        type: 'object',
        required: ['plane', 'at', 'nu', 'nv', 'u0', 'v0', 'du', 'dv'],
        // Grids, when present, are explicit encodings, never objects of indices.
        properties: Object.fromEntries(
          ['potential', 'fieldU', 'fieldV', 'fieldMagnitude', 'inside'].map((k) => [
            k,
            { type: 'object', required: ['dtype', 'length', 'base64'], additionalProperties: false, properties: { dtype: { enum: ['float64', 'float32', 'int16'] }, length: { type: 'integer' }, base64: { type: 'string' } } },
          ]),
        ),
      },
    },
    diagnostics: {
      type: 'array',
      items: {
        type: 'object',
        required: ['code', 'severity', 'message', 'range'],
        properties: { code: { type: 'string', pattern: '^VS\\d{3}$' }, severity: { enum: ['error', 'warning', 'info'] }, message: { type: 'string' }, range },
      },
    },
    stats: {
      type: 'object',
      required: ['panels', 'unknowns', 'solver', 'timings', 'levels'],
      properties: { panels: { type: 'integer' }, unknowns: { type: 'integer' }, solver: { type: 'string' }, timings: { type: 'object' }, levels: { type: 'array', items: { type: 'integer' } } },
    },
  },
} as const;
