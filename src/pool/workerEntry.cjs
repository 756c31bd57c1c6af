// Entry of the evaluation pool's worker threads, in CommonJS (copied beside the compiled worker.js).
// The pool library loads a worker file with require() first, and require() of an ES module (Node
// 20.19 and later) can abort the whole process when it meets that module still being linked: seen
// once in several full test runs as "v8::Module::IsGraphAsync must be used on an instantiated
// module" inside a worker. This file starts the ES worker's import at once (the thread loads its
// modules while it waits for its first task, as before) and hands every task to the worker's
// default export, so no ES module is ever require()d.
'use strict';
const { join } = require('node:path');
const { pathToFileURL } = require('node:url');

const loaded = import(pathToFileURL(join(__dirname, 'worker.js')).href);
// A failed import is reported by the first task that awaits it, not as an unhandled rejection.
loaded.catch(() => {});

module.exports = async function runTask(task) {
  const worker = await loaded;
  return worker.default(task);
};
