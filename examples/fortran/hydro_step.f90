! hydro_step.f90 — how a Fortran hydro code uses the fermiwell module: one call evaluates every
! zone at (density, temperature); after the energy update one call inverts every zone at
! (density, specific energy) for the new temperature and pressure.
!
! Build: make -C examples/fortran      Run: FERMIWELL_URL=… FERMIWELL_KEY=fwk_… ./hydro_step
! Output: '#' comment lines, then whitespace-separated rows.
program hydro_step
  use, intrinsic :: iso_c_binding, only: c_double, c_int
  use fermiwell
  implicit none
  integer, parameter :: nz = 8
  character(*), parameter :: composition = 'mixture=c12-o16'
  type(fermiwell_client) :: fw
  real(c_double) :: rho(nz), temp(nz), state(nz, 3), solved(nz, 3), eint(nz), heated(nz)
  integer(c_int) :: status(nz), inv_status(nz)
  integer :: ierr, i

  call fw_open(fw, ierr=ierr)
  if (ierr /= FW_OK) then
    write (*, '(a)') 'set FERMIWELL_KEY to an API key (fwk_...) and FERMIWELL_URL to the gateway'
    stop 1
  end if

  ! a C/O white-dwarf envelope: density falls and temperature falls outwards
  do i = 1, nz
    rho(i) = 10.0_c_double**(9 - i)
    temp(i) = 10.0_c_double**(9.0_c_double - 0.25_c_double * i)
  end do

  call fw_evaluate(fw, rho, temp, 'pressure,specificEnergy,soundSpeed', state, status, composition, ierr)
  if (ierr /= FW_OK) then
    write (*, '(a)') 'evaluate failed: ' // fw_error_message(fw)
    stop 2
  end if
  write (*, '(a)') '# evaluate: zone density[g/cm3] temperature[K] pressure[erg/cm3] specificEnergy[erg/g] soundSpeed[cm/s] status'
  do i = 1, nz
    write (*, '(a, i3, 5es25.16e3, i4, 1x, a)') 'evaluate', i, rho(i), temp(i), state(i, 1), state(i, 2), state(i, 3), &
      status(i), fw_status_name(status(i))
  end do
  eint = state(:, 2)

  ! the round trip: the temperature back from (density, energy) must be the one we started from
  call fw_invert(fw, 'density,specificEnergy', rho, eint, 'temperature,pressure,iterations', solved, inv_status, &
    composition, ierr)
  if (ierr /= FW_OK) then
    write (*, '(a)') 'invert failed: ' // fw_error_message(fw)
    stop 2
  end if
  write (*, '(a)') '# invert (round trip): zone temperature[K] temperatureGiven[K] pressure[erg/cm3] iterations status'
  do i = 1, nz
    write (*, '(a, i3, 3es25.16e3, f6.0, i4, 1x, a)') 'roundtrip', i, solved(i, 1), temp(i), solved(i, 2), solved(i, 3), &
      inv_status(i), fw_status_name(inv_status(i))
  end do

  ! the hydro step: every zone gains 10 % specific energy; find its new temperature
  heated = 1.1_c_double * eint
  call fw_invert(fw, 'density,specificEnergy', rho, heated, 'temperature,pressure,iterations', solved, inv_status, &
    composition, ierr)
  if (ierr /= FW_OK) then
    write (*, '(a)') 'invert failed: ' // fw_error_message(fw)
    stop 2
  end if
  write (*, '(a)') '# after +10 % energy: zone specificEnergy[erg/g] temperature[K] pressure[erg/cm3] status'
  do i = 1, nz
    write (*, '(a, i3, 3es25.16e3, i4, 1x, a)') 'heated', i, heated(i), solved(i, 1), solved(i, 2), inv_status(i), &
      fw_status_name(inv_status(i))
  end do

  ! a refused request surfaces the problem+json detail
  call fw_evaluate(fw, rho(1:1), temp(1:1), 'pressure', state(1:1, 1:1), status(1:1), 'mixture=no-such-mixture', ierr)
  write (*, '(a, i3, i5, 1x, a)') 'refused', ierr, fw_http_status(fw), fw_error_message(fw)

  call fw_close(fw)
end program hydro_step
