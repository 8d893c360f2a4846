"""The service is part of the library, so cpp-httplib is a required build
dependency: configuring without it must stop at once with a message naming
it (before, CMake treated it as optional while the service included it
unconditionally, so the build failed later in the compiler).

Two configurations of a scratch build folder: one with every pkg-config file
the machine has (it must succeed, so the second's failure is httplib's), one
with the same files except cpp-httplib.pc.
"""
import glob
import os
import shutil
import tempfile

from common import SOURCE, check, finish, run

PC_DIRS = [d for d in run(["pkg-config", "--variable", "pc_path", "pkg-config"]).stdout.strip().split(":") if d]


def configure(skip):
    with tempfile.TemporaryDirectory(prefix="isohypse-pc-") as pcdir, \
            tempfile.TemporaryDirectory(prefix="isohypse-cfg-") as build:
        for d in PC_DIRS:
            for pc in glob.glob(os.path.join(d, "*.pc")):
                name = os.path.basename(pc)
                if name != skip and not os.path.exists(os.path.join(pcdir, name)):
                    os.symlink(pc, os.path.join(pcdir, name))
        env = dict(os.environ, PKG_CONFIG_LIBDIR=pcdir, PKG_CONFIG_PATH="")
        r = run(["cmake", "-S", SOURCE, "-B", build, "-DBUILD_TESTING=OFF"], env=env)
        return r.returncode, r.stdout + r.stderr


code, out = configure(skip=None)
check(code == 0, f"configures with every pkg-config file (exit {code})")
code, out = configure(skip="cpp-httplib.pc")
check(code != 0, f"refuses to configure without cpp-httplib (exit {code})")
check("cpp-httplib" in out, "the message names cpp-httplib")
finish()
