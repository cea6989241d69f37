#!/usr/bin/python3
"""Independent Python implementation of rankplan's random stream (package stream).

Run from this folder:  /usr/bin/python3 stream_ref.py > stream_ref.json

It reimplements, from the package documentation of rankplan/stats/stream, every step
of the stream with nothing but the Python standard library:

  * keys: SHA-256 (hashlib) over the documented byte layout;
  * raw values: ChaCha8Rand, written here from the description in the C2SP
    specification (https://c2sp.org/chacha8rand) as summarised in the package comment
    of Go 1.26.8's src/internal/chacha8rand/chacha8_generic.go (ChaCha with 8 rounds,
    zero nonce, 16 blocks per 32-byte seed, constants and counter not added back,
    4-way interleaving, last 32 bytes reseed);
  * Below: Lemire (2019) with Python's unbounded integers instead of a 128-bit multiply;
  * Fisher-Yates (Durstenfeld 1964) and the index resampler.

Before printing anything it checks the generator against the specification's test
vector as copied in Go 1.26.8 src/math/rand/v2/chacha8_test.go (chacha8seed,
chacha8output, and the SHA-256 of the first 2976 output bytes, chacha8hash), so the
ChaCha8Rand part here is verified independently of the Go code under test.
"""

import hashlib
import json
import struct
import sys

M32 = 0xFFFFFFFF
M64 = 0xFFFFFFFFFFFFFFFF
LABEL = b"rankplan/stream/v1"


def rotl(x, n):
    return ((x << n) | (x >> (32 - n))) & M32


def quarter(s, a, b, c, d):
    s[a] = (s[a] + s[b]) & M32
    s[d] = rotl(s[d] ^ s[a], 16)
    s[c] = (s[c] + s[d]) & M32
    s[b] = rotl(s[b] ^ s[c], 12)
    s[a] = (s[a] + s[b]) & M32
    s[d] = rotl(s[d] ^ s[a], 8)
    s[c] = (s[c] + s[d]) & M32
    s[b] = rotl(s[b] ^ s[c], 7)


def chacha8_block(key_words, counter):
    """One ChaCha8 block with the input constants and counter not added back."""
    init = [0x61707865, 0x3320646E, 0x79622D32, 0x6B206574] + key_words + [counter, 0, 0, 0]
    s = list(init)
    for _ in range(4):  # 4 double rounds = 8 rounds
        quarter(s, 0, 4, 8, 12)
        quarter(s, 1, 5, 9, 13)
        quarter(s, 2, 6, 10, 14)
        quarter(s, 3, 7, 11, 15)
        quarter(s, 0, 5, 10, 15)
        quarter(s, 1, 6, 11, 12)
        quarter(s, 2, 7, 8, 13)
        quarter(s, 3, 4, 9, 14)
    for i in range(4, 12):  # only the key words are added back
        s[i] = (s[i] + init[i]) & M32
    return s


class ChaCha8Rand:
    def __init__(self, seed):
        assert len(seed) == 32
        self.seed = bytes(seed)
        self.buf = []

    def _iterate(self):
        key_words = list(struct.unpack("<8I", self.seed))
        out = bytearray()
        for group in range(4):
            blocks = [chacha8_block(key_words, 4 * group + b) for b in range(4)]
            for w in range(16):
                for b in range(4):
                    out += struct.pack("<I", blocks[b][w])
        assert len(out) == 1024
        self.seed = bytes(out[992:])
        self.buf = list(struct.unpack("<124Q", bytes(out[:992])))
        self.buf.reverse()

    def uint64(self):
        if not self.buf:
            self._iterate()
        return self.buf.pop()


def key(purpose, seed, analysis_id, block):
    aid = analysis_id.encode("utf-8")
    data = (LABEL + b"\x00" + purpose.encode("ascii") + b"\x00" + struct.pack(">Q", seed)
            + struct.pack(">I", len(aid)) + aid + struct.pack(">Q", block))
    return hashlib.sha256(data).digest()


class Stream:
    def __init__(self, k):
        self.g = ChaCha8Rand(k)
        self.raw = 0  # raw values consumed

    def uint64(self):
        self.raw += 1
        return self.g.uint64()

    def below(self, n):
        assert 1 <= n <= M64
        p = self.uint64() * n
        hi, lo = p >> 64, p & M64
        if lo < n:
            t = (2**64 - n) % n
            while lo < t:
                p = self.uint64() * n
                hi, lo = p >> 64, p & M64
        return hi

    def shuffle(self, a):
        for i in range(len(a) - 1, 0, -1):
            j = self.below(i + 1)
            a[i], a[j] = a[j], a[i]

    def indices(self, count, n):
        return [self.below(n) for _ in range(count)]


def check_test_vector():
    # Go 1.26.8 src/math/rand/v2/chacha8_test.go: chacha8seed, first entries of
    # chacha8output, chacha8outlen = 2976 and chacha8hash (copied from the C2SP spec).
    seed = b"ABCDEFGHIJKLMNOPQRSTUVWXYZ123456"
    want = [0xB773B6063D4616A5, 0x1160AF22A66ABC3C, 0x8C2599D9418D287C, 0x7EE07E037EDC5CD6,
            0xCFAA9EE02D1C16AD, 0x0E090EEF8FEBEA79, 0x3C82D271128B5B3E, 0x9C5ADDC11252A34F]
    g = ChaCha8Rand(seed)
    got = [g.uint64() for _ in want]
    if got != want:
        sys.exit("ChaCha8Rand test vector mismatch: %s" % [hex(x) for x in got])
    g = ChaCha8Rand(seed)
    data = b"".join(struct.pack("<Q", g.uint64()) for _ in range(2976 // 8))
    if hashlib.sha256(data).hexdigest() != "bfec3d418b829afe5df2d8887d1508348409c293b73758d7efd841dd995fe021":
        sys.exit("ChaCha8Rand output hash mismatch (first 2976 bytes)")


def main():
    check_test_vector()
    out = {
        "generator": "stats/stream/testdata/stream_ref.py (independent implementation; standard library only)",
        "python": "%d.%d.%d" % sys.version_info[:3],
        "keys": [],
        "raw": None,
        "below": [],
        "shuffles": [],
        "indices": None,
    }
    key_cases = [
        ("kw-permutation", 0, "", 0),
        ("kw-permutation", 12345, "primary", 0),
        ("kw-permutation", 12345, "primary", 1),
        ("kw-permutation", 12345, "secondary", 0),
        ("kw-permutation", 12346, "primary", 0),
        ("bootstrap", 12345, "primary", 0),
        ("bootstrap", 2**64 - 1, "a/b c", 2**63),
        ("kw-effect-bootstrap", 42, "\u00e9tude-2", 7),
    ]
    for p, s, a, b in key_cases:
        out["keys"].append({"purpose": p, "seed": str(s), "analysis_id": a, "block": str(b),
                            "key": key(p, s, a, b).hex()})

    # 300 raw values cross two ChaCha8Rand iterations (124 values each), so the reseed
    # step is covered.
    st = Stream(key("kw-permutation", 12345, "primary", 0))
    out["raw"] = {"purpose": "kw-permutation", "seed": "12345", "analysis_id": "primary", "block": "0",
                  "values": ["%016x" % st.uint64() for _ in range(300)]}

    ns = [1, 2, 3, 10, 1000, 2**32, 2**32 + 1, 3 * 2**61, 2**63, 2**63 + 1, 2**64 - 1]
    for idx, n in enumerate(ns):
        st = Stream(key("test-below", 7, "below", idx))
        draws = [st.below(n) for _ in range(40)]
        out["below"].append({"n": str(n), "block": str(idx), "draws": [str(d) for d in draws],
                             "raw_consumed": st.raw})

    for size in (10, 100):
        st = Stream(key("test-shuffle", 7, "shuffle", size))
        a = list(range(size))
        st.shuffle(a)
        out["shuffles"].append({"size": size, "block": str(size), "perm": a, "raw_consumed": st.raw})

    st = Stream(key("test-indices", 7, "indices", 0))
    out["indices"] = {"n": 7, "count": 50, "block": "0", "draws": st.indices(50, 7)}

    json.dump(out, sys.stdout, indent=1, ensure_ascii=True)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
