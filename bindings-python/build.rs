fn main() {
    // Lets cargo's test binaries find the interpreter's libpython (pyenv's, not Debian's).
    pyo3_build_config::add_libpython_rpath_link_args();
}
