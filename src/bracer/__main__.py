from bracer.cli import main

main()
