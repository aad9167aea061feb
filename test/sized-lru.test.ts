import { describe, expect, it } from 'vitest';
import { SizedLru } from '../src/api/sizedLru.js';

// Least-recently-used eviction under a size bound (common practice for response caches).
describe('size-bounded LRU', () => {
  const lru = () => new SizedLru<string>(10, (_k, v) => v.length, 6);

  it('drops the least recently used until the total fits', () => {
    const c = lru();
    c.set('a', 'xxx');
    c.set('b', 'xxx');
    c.set('c', 'xxx');
    expect(c.get('a')).toBe('xxx'); // a is now the most recent
    c.set('d', 'xx'); // 11 > 10: b goes
    expect(c.get('b')).toBeUndefined();
    expect([c.get('a'), c.get('c'), c.get('d')]).toEqual(['xxx', 'xxx', 'xx']);
    expect(c.size).toBe(3);
  });

  it('counts a replaced value once and refuses an entry above its own bound', () => {
    const c = lru();
    c.set('a', 'xxxxx');
    c.set('a', 'xxxxx'); // replaced, still 5 in all
    c.set('b', 'xxxxx'); // 10: both fit
    expect([c.get('a'), c.get('b')]).toEqual(['xxxxx', 'xxxxx']);
    c.set('big', 'xxxxxxx'); // 7 > 6: not kept, nothing dropped
    expect(c.get('big')).toBeUndefined();
    expect(c.size).toBe(2);
  });
});
