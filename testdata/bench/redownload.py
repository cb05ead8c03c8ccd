#!/usr/bin/python3
"""Makes a "new download" of a bulk zip for the re-ingest benchmark: every
Nth study entry gets a revised brief title (its content, CRC-32 and size
change), the rest are copied unchanged.

    redownload.py IN.zip OUT.zip [EVERY]      # EVERY defaults to 50 (2%)
"""
import sys
import zipfile


def main():
    src, dst = sys.argv[1], sys.argv[2]
    every = int(sys.argv[3]) if len(sys.argv) > 3 else 50
    changed = 0
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for i, info in enumerate(zin.infolist()):
            data = zin.read(info)
            if i % every == 0 and b'"briefTitle": "' in data:
                data = data.replace(b'"briefTitle": "', b'"briefTitle": "Revised: ', 1)
                changed += 1
            zout.writestr(info.filename, data)
    print("entries %d changed %d" % (i + 1, changed))


if __name__ == "__main__":
    main()
