"""Packs a fuzz target's working corpus (a folder of inputs) into one file, and unpacks it again,
so that the repository holds five files instead of thousands. Format: for each input, its length
as 8 little-endian bytes, then its bytes; inputs sorted by content.

    python3 fuzz/corpus.py pack FOLDER FILE
    python3 fuzz/corpus.py unpack FILE FOLDER
"""
import hashlib
import os
import struct
import sys


def pack(folder, path):
    inputs = sorted(open(os.path.join(folder, n), "rb").read() for n in os.listdir(folder))
    with open(path, "wb") as out:
        for data in inputs:
            out.write(struct.pack("<Q", len(data)))
            out.write(data)


def unpack(path, folder):
    os.makedirs(folder, exist_ok=True)
    data = open(path, "rb").read() if os.path.exists(path) else b""
    at = 0
    while at < len(data):
        (length,) = struct.unpack_from("<Q", data, at)
        item = data[at + 8 : at + 8 + length]
        at += 8 + length
        name = hashlib.sha1(item).hexdigest()
        with open(os.path.join(folder, name), "wb") as f:
            f.write(item)


if __name__ == "__main__":
    command, source, target = sys.argv[1:4]
    {"pack": pack, "unpack": unpack}[command](source, target)
