import { describe, expect, it } from 'vitest';
import { fileError } from '../../src/ingest/source.js';

describe('fileError(err, file)', () => {
  it.each([
    ['ENOENT', 'FILE_NOT_FOUND', 'no such file'],
    ['ENOTDIR', 'FILE_NOT_FOUND', 'no such file (a part of the path is not a folder)'],
    ['EISDIR', 'FILE_UNREADABLE', 'this is a folder, not an events file'],
    ['EACCES', 'FILE_UNREADABLE', 'permission denied: the file cannot be read'],
    ['EPERM', 'FILE_UNREADABLE', 'permission denied: the file cannot be read'],
    ['EIO', 'FILE_UNREADABLE', 'the file cannot be read (EIO)'],
  ])('when the system says %s then the error is %s, one line naming the file', (sys, code, message) => {
    const e = fileError(Object.assign(new Error(`${sys}: raw system text`), { code: sys }), 'events.csv');
    expect(e.code).toBe(code);
    expect(e.message).toBe(message);
    expect(e.oneLine()).toMatch(/^events\.csv: /);
    expect(e.oneLine()).not.toContain('raw system text');
  });
});
