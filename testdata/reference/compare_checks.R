# Check values for compare/*_test.go. Run: Rscript testdata/reference/compare_checks.R (values pasted were produced with R 4.2.2).
options(digits=17)
cat("md_se", sqrt(12^2/42 + 10^2/40), "\n")
cat("sd_from_se", 1.5*sqrt(40), "\n")
cat("sd_from_ci", sqrt(30)*(52.1-44.3)/(2*qt(0.975,29)), "\n")
# combine arms: n1=30 m1=40 s1=9; n2=34 m2=36 s2=11
n1<-30;m1<-40;s1<-9;n2<-34;m2<-36;s2<-11
N<-n1+n2; M<-(n1*m1+n2*m2)/N
S<-sqrt(((n1-1)*s1^2+(n2-1)*s2^2+n1*n2/N*(m1^2+m2^2-2*m1*m2))/(N-1))
cat("combined", N, M, S, "\n")
# vs control n=33 m=41 s=10
cat("combined_md", M-41, sqrt(S^2/N+10^2/33), "\n")
# glucose mg/dL: treat 150 sd 30 n 50; ctrl 162 sd 33 n 48 -> mmol/L
f<-1/18.016
cat("gluc_md", (150-162)*f, sqrt((30*f)^2/50+(33*f)^2/48), "\n")
# fixed effect of effects -8,-6,-10,-4 se 2,2.5,3,1.5 ; then add -1,-2 se 2,1.8
y<-c(-8,-6,-10,-4); s<-c(2,2.5,3,1.5); w<-1/s^2
cat("fe_pub", sum(w*y)/sum(w), sqrt(1/sum(w)), "\n")
y2<-c(y,-1,-2); s2<-c(s,2,1.8); w2<-1/s2^2
cat("fe_aug", sum(w2*y2)/sum(w2), sqrt(1/sum(w2)), "\n")
dl<-function(y,s){w<-1/s^2;mu<-sum(w*y)/sum(w);Q<-sum(w*(y-mu)^2);k<-length(y);t2<-max(0,(Q-(k-1))/(sum(w)-sum(w^2)/sum(w)));ws<-1/(s^2+t2);c(sum(ws*y)/sum(ws),sqrt(1/sum(ws)),t2)}
cat("dl_pub", dl(y,s), "\n")
cat("dl_aug", dl(y2,s2), "\n")
# SE of a between-group estimate from its 95% CI, normal reference (Cochrane Handbook ch. 6)
cat("se_from_ci_normal", (2.4-(-6.6))/(2*qnorm(0.975)), "\n")
