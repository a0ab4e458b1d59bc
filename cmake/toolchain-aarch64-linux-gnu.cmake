# Cross-compiling for 64-bit ARM Linux (a handheld) with Debian's cross compiler; docs/handheld.md.
#
# Needs g++-aarch64-linux-gnu, and qemu-user to run the results on an x86-64 build machine; the target's
# libraries are Debian's :arm64 packages (.ci/packages-arm64.txt), installed beside the native ones under
# /usr/lib/aarch64-linux-gnu. Headers of header-only libraries (Boost.Math, Eigen, toml++, Catch2,
# nlohmann-json, CLI11) are the architecture-independent ones in /usr/include.
#
#   cmake -S . -B build-aarch64 -G Ninja -DCMAKE_TOOLCHAIN_FILE=cmake/toolchain-aarch64-linux-gnu.cmake \
#         -DPLOTWRIGHT_CROSS_TESTS=ON
set(CMAKE_SYSTEM_NAME Linux)
set(CMAKE_SYSTEM_PROCESSOR aarch64)
set(CMAKE_C_COMPILER aarch64-linux-gnu-gcc)
set(CMAKE_CXX_COMPILER aarch64-linux-gnu-g++)
# Searches /usr/lib/aarch64-linux-gnu (and its cmake/ and pkgconfig/) instead of the x86-64 directories.
set(CMAKE_LIBRARY_ARCHITECTURE aarch64-linux-gnu)
# ctest and Catch2's test discovery run the ARM executables through qemu; -L points it at the ARM loader and
# libc of the cross toolchain (libc6-arm64-cross).
set(CMAKE_CROSSCOMPILING_EMULATOR qemu-aarch64;-L;/usr/aarch64-linux-gnu)
# pkg-config must see only the ARM .pc files (and architecture-independent ones), never the x86-64 ones.
set(ENV{PKG_CONFIG_LIBDIR} /usr/lib/aarch64-linux-gnu/pkgconfig:/usr/share/pkgconfig)
# GCC notes on aarch64 that the ABI of passing some structs changed in GCC 10 (-Wpsabi); nothing here crosses
# a GCC 9 boundary, so the notes are noise.
set(CMAKE_CXX_FLAGS_INIT "-Wno-psabi")
