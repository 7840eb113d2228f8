"""The SHA-256 of a query's rows as PostgreSQL's COPY writes them in its
binary format, fetched by psql: the independent computation that
pgcohort's RowsSHA256 is checked against (see the pgcohort package doc).

usage: rows_sha256.py CONNECTION SQL   (prints the hex digest)
"""
import hashlib
import subprocess
import sys

conn, sql = sys.argv[1], sys.argv[2]
out = subprocess.run(
    ["psql", "-X", "-q", "-v", "ON_ERROR_STOP=1", "-d", conn,
     "-c", "\\copy (" + sql + ") to stdout with (format binary)"],
    check=True, capture_output=True).stdout
print(hashlib.sha256(out).hexdigest())
