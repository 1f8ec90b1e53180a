// The foothold binary: all behaviour lives in RunCli so tests can call it in-process.
#include <exception>
#include <iostream>
#include <string>
#include <vector>

#include "server/cli.h"

int main(int argc, char** argv) {
  std::vector<std::string> args(argv + 1, argv + argc);
  try {
    return foothold::RunCli(args, std::cout, std::cerr);
  } catch (const std::exception& failure) {
    // Bad input never throws; reaching here is a defect, reported rather than aborted on.
    std::cerr << "foothold: internal error: " << failure.what() << '\n';
    return 1;
  }
}
