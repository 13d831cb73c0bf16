#!/usr/bin/env python3
# Reruns every "$ fxmimo ..." README block the way tests/cli/readme_test.cpp does (a scratch
# directory with the examples, tests/cli/readme_inputs/ and the fixture vector sets) and writes the
# real output back. Usage: update_readme_blocks.py [LINE...] (only blocks whose command is at those lines).
import os, shutil, subprocess, sys, tempfile
src = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
exe = src + '/build/release/app/fxmimo'
only = set(int(a) for a in sys.argv[1:])
lines = open(src + '/README.md').read().split('\n')
out = []
i = 0
in_block = False
while i < len(lines):
    t = lines[i]
    if t.startswith('```'):
        in_block = not in_block
        out.append(t); i += 1; continue
    if in_block and t.startswith('$ fxmimo '):
        lineno = i + 1
        j = i + 1
        while j < len(lines) and not lines[j].startswith('```') and not lines[j].startswith('$ fxmimo '):
            j += 1
        if only and lineno not in only:
            out.extend(lines[i:j]); i = j; continue
        d = tempfile.mkdtemp(prefix='readme_')
        shutil.copytree(src + '/examples', d + '/examples')
        for e in os.listdir(src + '/tests/cli/readme_inputs'):
            s = src + '/tests/cli/readme_inputs/' + e
            (shutil.copytree if os.path.isdir(s) else shutil.copy)(s, d + '/' + e)
        shutil.copytree(src + '/tests/fixtures/vec-hex', d + '/vec')
        shutil.copytree(src + '/tests/fixtures/vec-npy', d + '/vec_npy')
        cmd = "cd '%s' && '%s'%s 2>&1" % (d, exe, t[2:][len('fxmimo'):])
        r = subprocess.run(cmd, shell=True, capture_output=True, text=True)
        printed = r.stdout
        out.append(t)
        if printed.endswith('\n'): printed = printed[:-1]
        if printed != '' or j > i + 1:
            out.extend(printed.split('\n') if printed != '' else [])
        print('README line %d: %s (%d lines)' % (lineno, t, printed.count('\n') + 1), file=sys.stderr)
        shutil.rmtree(d)
        i = j
        continue
    out.append(t); i += 1
open(src + '/README.md', 'w').write('\n'.join(out))
