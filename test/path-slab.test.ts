import { describe, expect, it } from 'vitest';
import { copyPath, newPath } from '../sim/path-slab.ts';

describe('path arrays from shared blocks (sim/path-slab.ts)', () => {
  it('hands out zero-filled arrays that never share a cell, across block boundaries and for long paths', () => {
    // Enough paths to fill several 16 KiB blocks, plus long ones that get their own array.
    const paths: Int32Array[] = [];
    for (let i = 0; i < 2000; i++) {
      const length = i % 97 === 0 ? 3000 : 1 + (i % 60);
      const path = newPath(length);
      expect(path.length).toBe(length);
      expect(path.every((v) => v === 0)).toBe(true);
      path.fill(i + 1);
      paths.push(path);
    }
    // Writing each path wrote only itself: every path still holds its own mark.
    paths.forEach((path, i) => expect(path.every((v) => v === i + 1)).toBe(true));
  });

  it('copies the first cells of a buffer', () => {
    const source = Int32Array.of(4, 5, 6, 7, 8);
    const copy = copyPath(source, 3);
    expect(Array.from(copy)).toEqual([4, 5, 6]);
    source[0] = 9;
    expect(copy[0]).toBe(4);
  });
});
