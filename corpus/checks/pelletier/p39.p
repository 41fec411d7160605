% problem: Pelletier 39
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(pel39_goal, conjecture,
    ~ (? [X] : ! [Y] : (f(Y, X) <=> ~f(Y, Y)))).
