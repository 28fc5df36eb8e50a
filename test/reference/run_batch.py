"""Runs several small reference jobs in one python3 process (so numpy, pandas, xarray and netCDF4 are imported once,
not once per job), each as `python3 SCRIPT ARGS...` or `python3 -c CODE ARGS...` would run it, and prints JSON: per
job its exit status and what it printed on stdout and stderr.

Usage: python3 test/reference/run_batch.py JOBS.json    (JOBS.json: {"name": ["script.py" | "-c", ..., args]})
"""
import contextlib
import io
import json
import runpy
import sys
import traceback

jobs = json.load(open(sys.argv[1]))
out = {}
for name, argv in jobs.items():
    buf, err = io.StringIO(), io.StringIO()
    status, saved = 0, sys.argv
    try:
        with contextlib.redirect_stdout(buf), contextlib.redirect_stderr(err):
            if argv[0] == "-c":
                sys.argv = ["-c"] + argv[2:]
                exec(compile(argv[1], f"<{name}>", "exec"), {"__name__": "__main__"})
            else:
                sys.argv = list(argv)
                runpy.run_path(argv[0], run_name="__main__")
    except SystemExit as e:
        status = e.code if isinstance(e.code, int) else (0 if e.code is None else 1)
    except Exception:
        status = 1
        err.write(traceback.format_exc())
    finally:
        sys.argv = saved
    out[name] = {"status": status, "stdout": buf.getvalue(), "stderr": err.getvalue()}
print(json.dumps(out))
