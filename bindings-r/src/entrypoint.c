// R looks for R_init_trajweave when it loads the shared object; extendr generates the
// registration routine under R_init_trajweave_extendr. Without a C source R builds no
// shared object at all.
void R_init_trajweave_extendr(void *dll);

void R_init_trajweave(void *dll) {
    R_init_trajweave_extendr(dll);
}
