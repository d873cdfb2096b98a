[assembly: System.CLSCompliant(false)]
