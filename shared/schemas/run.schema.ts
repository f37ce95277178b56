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
      description: 'The reference the unit was driven from, as the station measured it. The output frequency is checked against N × frequencyHz and the phase noise against the reference + 20·log10(N); a disagreement flags the run as a measurement problem.',
      properties: {
        frequencyHz: {
          type: 'number',
          exclusiveMinimum: 0,
        },
        phaseNoise: {
          type: 'array',
          maxItems: 64,
          description: 'Offsets must lie below frequencyHz and levels at or below 0 dBc/Hz (422 otherwise: no sideband lies beyond its carrier, and no 1 Hz of one sideband holds more power than the carrier).',
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
          description: 'Refused with 422 when no instrument can produce it: a number that is not finite (1e400); a negative integrated_jitter (an RMS value), output_frequency or supply_current; phase_noise above 0 dBc/Hz (more power in 1 Hz of a sideband than in the carrier). Values a working bench does not produce (more than ten spec widths from the centre of two-sided limits, phase noise below −200 dBc/Hz, harmonic rejection above 150 dB, jitter above 1 µs) are stored but flagged as a measurement problem and kept out of capability and charts.',
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
          description: 'Offset from the carrier; for phase_noise it must lie below the product\'s output frequency (422 otherwise).',
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
      description: '[x, y]; x is a frequency or offset in Hz. In a phase_noise_sweep trace ([offset, dBc/Hz]) the offset must lie below the product\'s output frequency and the level at or below 0 dBc/Hz (422 otherwise); the sweep is judged against the phase-noise limit mask.',
    },
  },
} as const
