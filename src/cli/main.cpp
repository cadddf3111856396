// swaybound: design checks of swinging mechanisms. See README.md.
#include "commands.hpp"

int main(int argc, char** argv) { return swaybound::cli::run(argc, argv); }
