#include <iostream>

#include "cli_context.hpp"

int main(int argc, char** argv) { return cullcast::cli::run(argc, argv, std::cout, std::cerr); }
