"""The kinage namespace shows its public surface only."""

import subprocess
import sys
import types


def test_import_kinage_exposes_only_all_and_own_submodules():
    # PEP 8 ("Public and internal interfaces"): names not in __all__ are internal; a helper module such as
    # importlib must not look like part of the API.  Checked in a fresh process, then after the lazy names load.
    code = ("import kinage, types\n"
            "def extra():\n"
            "    return sorted(n for n in dir(kinage) if not n.startswith('_') and n not in kinage.__all__\n"
            "                  and not (isinstance(getattr(kinage, n), types.ModuleType)\n"
            "                           and getattr(kinage, n).__name__ == 'kinage.' + n))\n"
            "print(extra())\n"
            "for n in kinage.__all__: getattr(kinage, n)\n"
            "print(extra())\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.split("\n")[:2] == ["[]", "[]"], out.stdout
    import kinage

    assert "importlib" not in vars(kinage)
    for name in kinage.__all__:
        assert hasattr(kinage, name), name
    assert all(isinstance(getattr(kinage, n), types.ModuleType) for n in kinage._SUBMODULES)
