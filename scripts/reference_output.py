"""Output of the reference scripts: the reference document as indented JSON, printed with
--print (as the tests run a script live) or written to <out_dir>/reference.json (the committed
fixture the tests read when python3 is missing). Imported by the scripts beside it."""
import json
import os
import sys


def emit_reference(doc, out_dir):
    text = json.dumps(doc, indent=1) + "\n"
    if "--print" in sys.argv:
        sys.stdout.write(text)
        return
    os.makedirs(out_dir, exist_ok=True)
    with open(os.path.join(out_dir, "reference.json"), "w") as f:
        f.write(text)
