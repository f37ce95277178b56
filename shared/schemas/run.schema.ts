export const runSchema = {
  '$schema': 'https://json-schema.org/draft/2020-12/schema',
  '$id': 'https://tercet.invalid/schemas/run.json',
  title: 'Tercet station test run',
  description: 'One test run of one unit, as posted by a test station.',
  type: 'object',
  additionalProperties: false,
  required: ['id', 'serial', 'partNumber', 'lot', 'startedAt', 'finishedAt', 'measurements'],
  properties: {
    id: {
      type: 'string',
      format: 'uuid',
      description: 'Chosen by the station; posting the same id again is a retry of the same run.',
    },
    serial: {
      type: 'string',
      pattern: '^[A-Za-z0-9._-]{1,64}$',
    },
    partNumber: {
      type: 'string',
      minLength: 1,
      maxLength: 40,
    },
    lot: {
      type: 'string',
      pattern: '^[A-Za-z0-9._/-]{1,32}$',
    },
    step: {
      type: 'string',
      pattern: '^[a-z][a-z0-9-]{0,23}$',
      default: 'final',
    },
    startedAt: {
      type: 'string',
      format: 'date-time',
    },
    finishedAt: {
      type: 'string',
      format: 'date-time',
    },
    operator: {
      type: 'string',
      minLength: 1,
      maxLength: 64,
    },
    software: {
      type: 'object',
      additionalProperties: false,
      required: ['sequence', 'version'],
      properties: {
        sequence: {
          type: 'string',
          minLength: 1,
          maxLength: 64,
        },
        version: {
          type: 'string',
          minLength: 1,
          maxLength: 64,
        },
      },
    },
    conditions: {
      type: 'object',
      additionalProperties: false,
      required: ['temperatureC', 'supplyV'],
      properties: {
        temperatureC: {
          type: 'number',
          minimum: -273.15,
        },
        supplyV: {
          type: 'number',
        },
      },
    },
    stationVerdict: {
      type: 'string',
      enum: ['pass', 'fail'],
    },
    reference: {
      type: 'object',
      additionalProperties: false,
      required: ['frequencyHz'],
      properties: {
        frequencyHz: {
          type: 'number',
          exclusiveMinimum: 0,
        },
        phaseNoise: {
          type: 'array',
          maxItems: 64,
          items: {
            '$ref': '#/$defs/phaseNoisePoint',
          },
        },
      },
    },
    measurements: {
      type: 'array',
      minItems: 1,
      maxItems: 500,
      items: {
        '$ref': '#/$defs/measurement',
      },
    },
    instrumentAssets: {
      type: 'array',
      minItems: 1,
      maxItems: 50,
      uniqueItems: true,
      items: {
        '$ref': '#/$defs/assetNumber',
      },
      description: 'Asset numbers of the instruments this run was measured with, as registered in Tercet. When given, the run is judged against the calibration records of these instruments at startedAt instead of the instruments its station held then; an asset number Tercet does not know is refused (422).',
    },
    traces: {
      type: 'array',
      maxItems: 8,
      items: {
        '$ref': '#/$defs/trace',
      },
    },
  },
  '$defs': {
    assetNumber: {
      type: 'string',
      pattern: '^[A-Za-z0-9][A-Za-z0-9._/-]{0,31}$',
      description: 'An instrument\'s asset number: letters, digits and . _ / -, at most 32 characters.',
    },
    measurementName: {
      type: 'string',
      pattern: '^[a-z][a-z0-9_]{1,47}$',
    },
    phaseNoisePoint: {
      type: 'object',
      additionalProperties: false,
      required: ['offsetHz', 'value'],
      properties: {
        offsetHz: {
          type: 'number',
          exclusiveMinimum: 0,
        },
        value: {
          type: 'number',
        },
      },
    },
    measurement: {
      type: 'object',
      additionalProperties: false,
      required: ['name', 'value', 'unit'],
      properties: {
        name: {
          '$ref': '#/$defs/measurementName',
        },
        value: {
          type: 'number',
        },
        unit: {
          type: 'string',
          minLength: 1,
          maxLength: 16,
          description: 'Unit of the value; checked against the measurement name and the spec (422 when it does not match).',
        },
        uncertainty: {
          type: 'number',
          minimum: 0,
          description: 'Expanded uncertainty (k = 2), in the measurement\'s unit.',
        },
        offsetHz: {
          type: 'number',
          exclusiveMinimum: 0,
        },
        harmonic: {
          type: 'integer',
          minimum: 1,
        },
      },
      allOf: [
        {
          if: {
            type: 'object',
            properties: {
              name: {
                const: 'phase_noise',
              },
            },
            required: ['name'],
          },
          then: {
            properties: {
              offsetHz: true,
            },
            required: ['offsetHz'],
          },
        },
        {
          if: {
            type: 'object',
            properties: {
              name: {
                const: 'harmonic_rejection',
              },
            },
            required: ['name'],
          },
          then: {
            properties: {
              harmonic: true,
            },
            required: ['harmonic'],
          },
        },
      ],
    },
    trace: {
      type: 'object',
      additionalProperties: false,
      required: ['name', 'points'],
      properties: {
        name: {
          '$ref': '#/$defs/measurementName',
        },
        points: {
          type: 'array',
          minItems: 1,
          maxItems: 2000,
          items: {
            '$ref': '#/$defs/tracePoint',
          },
        },
      },
    },
    tracePoint: {
      type: 'array',
      prefixItems: [
        {
          type: 'number',
          exclusiveMinimum: 0,
        },
        {
          type: 'number',
        },
      ],
      items: false,
      minItems: 2,
      description: '[x, y]; x is a frequency or offset in Hz.',
    },
  },
} as const
