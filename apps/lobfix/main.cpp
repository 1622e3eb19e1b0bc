#include <cstdio>
int main() { std::puts("lobfix " LOBFIX_VERSION); return 0; }
