/** The seeded generator of src/util/seeded-uniform.ts, for randomised checks that repeat. */
export { seededUniform } from '../../src/util/seeded-uniform.js';
