from summarize.cli import main

main()
