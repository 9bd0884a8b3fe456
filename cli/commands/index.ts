// The commands of `pleat`. Adding a command is one line: export its `register` function here
// under the command's name (see cli/context.ts for the signature).
export { register as check } from './check';
export { register as schema } from './schema';
export { register as init } from './init';
export { register as simulate } from './simulate';
export { register as rtl } from './rtl';
export { register as upload } from './upload';
export { register as plan } from './plan';
export { register as sweep } from './sweep';
export { register as baseline } from './baseline';
export { register as diff } from './diff';
