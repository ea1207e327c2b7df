// Validates glTF 2.0 files (.gltf or .glb) with the Khronos glTF Validator
// (npm package `gltf-validator`), loading their external resources (.bin,
// images) from beside each file. Used by tests/gltf.rs.
//
//   node tests/gltf_validate.js FILE...
//
// The package is looked up in $GLTF_VALIDATOR_DIR/node_modules, then in
// target/validator/node_modules (where .ci/run installs it), then as usual.
// Prints one summary line per file and every issue; exits 0 when no file has
// an error, 1 when one has, 3 when the package cannot be found.
'use strict';
const fs = require('fs');
const path = require('path');

const roots = [
  process.env.GLTF_VALIDATOR_DIR,
  path.join(__dirname, '..', 'target', 'validator'),
].filter(Boolean).map((d) => path.join(d, 'node_modules'));

let validator;
try {
  validator = require(require.resolve('gltf-validator', { paths: roots }));
} catch (e) {
  console.error('gltf-validator not found in ' + roots.join(', ') +
    ': install it with `npm install --prefix target/validator --no-save gltf-validator@2.0.0-dev.3.10`');
  process.exit(3);
}

const SEVERITY = ['error', 'warning', 'info', 'hint'];

async function validate(file) {
  const bytes = new Uint8Array(fs.readFileSync(file));
  const report = await validator.validateBytes(bytes, {
    uri: path.basename(file),
    maxIssues: 0,
    writeTimestamp: false,
    externalResourceFunction: (uri) => new Promise((resolve, reject) => {
      const p = path.resolve(path.dirname(file), decodeURIComponent(uri));
      fs.readFile(p, (err, data) => (err ? reject(err.toString()) : resolve(new Uint8Array(data))));
    }),
  });
  const i = report.issues;
  console.log(`${file}: ${i.numErrors} errors, ${i.numWarnings} warnings, ${i.numInfos} infos, ${i.numHints} hints` +
    ` (validator ${report.validatorVersion})`);
  for (const m of i.messages) {
    console.log(`  ${SEVERITY[m.severity] || m.severity} ${m.code} at ${m.pointer || m.offset || '-'}: ${m.message}`);
  }
  return i.numErrors;
}

(async () => {
  const files = process.argv.slice(2);
  if (files.length === 0) {
    console.error('usage: node tests/gltf_validate.js FILE...');
    process.exit(2);
  }
  let errors = 0;
  for (const f of files) {
    try {
      errors += await validate(f);
    } catch (e) {
      console.log(`${f}: validator could not read it: ${e}`);
      errors += 1;
    }
  }
  console.log(`validated ${files.length} files: ${errors} errors`);
  process.exit(errors > 0 ? 1 : 0);
})();
