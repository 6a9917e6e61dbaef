! POST http://127.0.0.1:8080/v1/eos/evaluate with the JSON body below.
! Uses the fermiwell module and C client from examples/fortran and examples/c of the Fermiwell
! sources (Fortran has no HTTP of its own):
!   gfortran -ffree-line-length-none fermiwell.f90 request.f90 fermiwell.c -lcurl -o request && ./request
program request
  use fermiwell
  implicit none
  character(len=*), parameter :: body = &
    "{" // &
    "  ""density"": [" // &
    "    1000000," // &
    "    10000000" // &
    "  ]," // &
    "  ""temperature"": 100000000," // &
    "  ""composition"": {" // &
    "    ""mixture"": ""c12-o16""" // &
    "  }," // &
    "  ""fields"": [" // &
    "    ""pressure""," // &
    "    ""specificEnergy""," // &
    "    ""gamma1""" // &
    "  ]" // &
    "}"
  type(fermiwell_client) :: fw
  character(:), allocatable :: answer
  integer :: ierr

  call fw_open(fw, url="http://127.0.0.1:8080", ierr=ierr) ! the key comes from $FERMIWELL_KEY
  if (ierr /= FW_OK) stop 'set FERMIWELL_KEY'
  call fw_post_json(fw, "/v1/eos/evaluate", body, answer, ierr)
  if (ierr /= FW_OK) then
    print '(a)', fw_error_message(fw) ! the problem's title and detail
    stop 2
  end if
  print '(a)', answer
  call fw_close(fw)
end program request
