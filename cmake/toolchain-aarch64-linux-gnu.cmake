# Cross-compiling for 64-bit ARM Linux (a handheld) with Debian's cross compiler; docs/handheld.md.
#
# The compiler, and the ARM C and C++ runtime under /usr/aarch64-linux-gnu, come from g++-aarch64-linux-gnu;
# qemu-user runs the results on an x86-64 build machine. The ARM builds of the libraries plotwright links
# (SQLite, libpng, libqrencode, libcsv, ncurses, fmt, Nettle, GeographicLib) are Debian's :arm64 packages
# unpacked, not installed, into PW_TARGET_ROOT (`./run cross-test` does it from .ci/packages-arm64-target.txt),
# so the build machine's own packages are never upgraded or replaced. Header-only libraries (Boost.Math,
# Eigen, toml++, Catch2, nlohmann-json, CLI11) are the architecture-independent ones in /usr/include.
#
#   cmake -S . -B build-aarch64 -G Ninja -DCMAKE_TOOLCHAIN_FILE=cmake/toolchain-aarch64-linux-gnu.cmake \
#         -DPW_TARGET_ROOT=$PWD/build-aarch64/target-root
set(CMAKE_SYSTEM_NAME Linux)
set(CMAKE_SYSTEM_PROCESSOR aarch64)
set(CMAKE_C_COMPILER aarch64-linux-gnu-gcc)
set(CMAKE_CXX_COMPILER aarch64-linux-gnu-g++)
# Searches <prefix>/lib/aarch64-linux-gnu (and its cmake/ and pkgconfig/) instead of the x86-64 directories.
set(CMAKE_LIBRARY_ARCHITECTURE aarch64-linux-gnu)

set(PW_TARGET_ROOT "" CACHE PATH "Folder holding the unpacked :arm64 library packages (usr/, lib/)")
# try_compile projects run this file again: hand them the folder too.
list(APPEND CMAKE_TRY_COMPILE_PLATFORM_VARIABLES PW_TARGET_ROOT)
if(NOT PW_TARGET_ROOT OR NOT IS_DIRECTORY "${PW_TARGET_ROOT}/usr")
  message(FATAL_ERROR "PW_TARGET_ROOT must name the folder of unpacked arm64 packages (./run cross-test makes it)")
endif()
set(_pw_target_libs "${PW_TARGET_ROOT}/usr/lib/aarch64-linux-gnu;${PW_TARGET_ROOT}/lib/aarch64-linux-gnu")
# find_library / find_path / find_package look in the unpacked packages first, then in /usr (headers only).
list(PREPEND CMAKE_PREFIX_PATH "${PW_TARGET_ROOT}/usr")
# pkg-config sees only the ARM .pc files, and prefixes their paths with the unpacked folder.
set(ENV{PKG_CONFIG_LIBDIR} "${PW_TARGET_ROOT}/usr/lib/aarch64-linux-gnu/pkgconfig:${PW_TARGET_ROOT}/usr/share/pkgconfig")
set(ENV{PKG_CONFIG_SYSROOT_DIR} "${PW_TARGET_ROOT}")
# A library's own dependencies (libpng needs zlib, ncursesw needs tinfo) are found there at link time, and
# so are the names in linker scripts (libncursesw.so is "INPUT(libncursesw.so.6 -ltinfo)").
string(REPLACE ";" ":" _pw_rpath_link "${_pw_target_libs}")
list(TRANSFORM _pw_target_libs PREPEND "-L" OUTPUT_VARIABLE _pw_link_dirs)
string(REPLACE ";" " " _pw_link_dirs "${_pw_link_dirs}")
set(CMAKE_EXE_LINKER_FLAGS_INIT "${_pw_link_dirs} -Wl,-rpath-link,${_pw_rpath_link}")
# ctest and Catch2's test discovery run the ARM executables through qemu: -L points it at the ARM loader and
# libc of the cross toolchain, LD_LIBRARY_PATH (for the ARM loader) at the unpacked libraries.
string(REPLACE ";" ":" _pw_ld_path "${_pw_target_libs}")
set(CMAKE_CROSSCOMPILING_EMULATOR qemu-aarch64;-L;/usr/aarch64-linux-gnu;-E;LD_LIBRARY_PATH=${_pw_ld_path})
# GCC notes on aarch64 that the ABI of passing some structs changed in GCC 10 (-Wpsabi); nothing here crosses
# a GCC 9 boundary, so the notes are noise.
set(CMAKE_CXX_FLAGS_INIT "-Wno-psabi")
