/**
 * Child process of kill.test.ts: write report version A or B into a folder with the real
 * replaceFolder, and SIGKILL itself after step `killAt` of the write (0: never; the parent may kill it
 * at a random moment instead). Prints "ready" just before the write starts and "done" after it.
 *   node --import tsx test/output/killWriter.ts DIR A|B KILL_AT
 */
import { replaceFolder } from '../../src/output/atomic.js';
import { reportVersion } from './reportVersions.js';

const [dir, version, killAt] = process.argv.slice(2);
let step = 0;
process.stdout.write('ready\n');
replaceFolder(dir, reportVersion(version as 'A' | 'B'), {
  step() {
    if (++step === Number(killAt)) process.kill(process.pid, 'SIGKILL');
  },
});
process.stdout.write('done\n');
