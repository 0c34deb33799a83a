"""Reads and rewrites the few ModelProto fields the reference scripts need.

A hand-written protobuf wire-format walker: the Debian python3-sentencepiece
package does not pull in the protobuf module, and the scripts need only the
normalizer spec (ModelProto field 3) and a few of its fields.
"""


def _varint(b, i):
    x = 0
    shift = 0
    while True:
        c = b[i]
        i += 1
        x |= (c & 0x7F) << shift
        if c < 0x80:
            return x, i
        shift += 7


def _put_varint(x):
    out = bytearray()
    while True:
        c = x & 0x7F
        x >>= 7
        if x:
            out.append(c | 0x80)
        else:
            out.append(c)
            return bytes(out)


def fields(b):
    """Yields (field number, wire type, value bytes or int, raw bytes) of a message."""
    i = 0
    while i < len(b):
        start = i
        key, i = _varint(b, i)
        num, wt = key >> 3, key & 7
        if wt == 0:
            v, i = _varint(b, i)
        elif wt == 1:
            v = b[i:i + 8]
            i += 8
        elif wt == 2:
            n, i = _varint(b, i)
            v = b[i:i + n]
            i += n
        elif wt == 5:
            v = b[i:i + 4]
            i += 4
        else:
            raise ValueError("wire type %d at %d" % (wt, start))
        yield num, wt, v, b[start:i]


def normalizer_spec(model):
    """Returns the raw NormalizerSpec message of a serialized ModelProto."""
    for num, wt, v, _ in fields(model):
        if num == 3 and wt == 2:
            return v
    return b""


def charsmap(model):
    """Returns NormalizerSpec.precompiled_charsmap (field 2)."""
    for num, wt, v, _ in fields(normalizer_spec(model)):
        if num == 2 and wt == 2:
            return v
    return b""


def with_normalizer_flags(model, **flags):
    """Returns model with NormalizerSpec booleans set: add_dummy_prefix (3),
    remove_extra_whitespaces (4), escape_whitespaces (5)."""
    nums = {"add_dummy_prefix": 3, "remove_extra_whitespaces": 4, "escape_whitespaces": 5}
    want = {nums[k]: bool(v) for k, v in flags.items()}
    spec = bytearray()
    for num, wt, v, raw in fields(normalizer_spec(model)):
        if num not in want:
            spec += raw
    for num, v in sorted(want.items()):
        spec += _put_varint(num << 3 | 0) + _put_varint(int(v))
    out = bytearray()
    for num, wt, v, raw in fields(model):
        if num == 3:
            out += _put_varint(3 << 3 | 2) + _put_varint(len(spec)) + spec
        else:
            out += raw
    return bytes(out)
