export const runBatchSchema = {
  '$schema': 'https://json-schema.org/draft/2020-12/schema',
  '$id': 'https://tercet.invalid/schemas/run-batch.json',
  title: 'Tercet batch of station test runs',
  type: 'object',
  additionalProperties: false,
  required: ['runs'],
  properties: {
    runs: {
      type: 'array',
      minItems: 1,
      maxItems: 500,
      items: {
        '$ref': 'run.json',
      },
    },
  },
} as const
